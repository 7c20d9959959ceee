import knex, { type Knex } from "knex";

import config from "../knexfile";

const toCamel = (s: string) => s.replace(/_([a-z0-9])/g, (_, c: string) => c.toUpperCase());
const toSnake = (s: string) => s.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`);

function camelizeRow(row: unknown): unknown {
  if (Array.isArray(row)) return row.map(camelizeRow);
  if (row && typeof row === "object" && !(row instanceof Date) && !Buffer.isBuffer(row)) {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(row)) out[toCamel(k)] = v;
    return out;
  }
  return row;
}

/**
 * The one Knex instance. Columns are snake_case in SQL and camelCase in TypeScript; the
 * conversion happens here and nowhere else (identifiers out, top-level row keys back).
 * Cached on globalThis so Next's hot reload does not leak pools.
 */
function createDb(): Knex {
  return knex({
    ...config,
    wrapIdentifier: (value, origImpl) => origImpl(value === "*" ? value : toSnake(value)),
    postProcessResponse: (result) => (Array.isArray(result) ? result.map(camelizeRow) : camelizeRow(result)),
  });
}

const cache = globalThis as { burstwiseDb?: Knex };
export const db: Knex = cache.burstwiseDb ?? createDb();
cache.burstwiseDb = db;

/** Closes the pool (worker shutdown, CLI, scripts); `openDb()` opens it again. */
export async function closeDb(): Promise<void> {
  await db.destroy();
}

/** Re-opens the pool after `closeDb()` (scripts that run several steps in one process). */
export function openDb(): void {
  if (!(db.client as { pool?: unknown }).pool) db.initialize();
}
