import { PgBoss } from "pg-boss";

import { env } from "@/lib/env";

/** Queue names; payload schemas join them here as the queues are added. */
export const Queues = { simulate: "simulate" } as const;

/** A pg-boss instance on the app's database (schema `pgboss`). */
export function createBoss(): PgBoss {
  const boss = new PgBoss({ connectionString: env.DATABASE_URL, schema: "pgboss" });
  boss.on("error", (e) => console.error("[pg-boss]", e));
  return boss;
}
