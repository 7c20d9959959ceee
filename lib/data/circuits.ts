import { createHash } from "node:crypto";

import { db } from "@/db/client";
import { audited, type AuditFor } from "@/lib/data/audit";
import { conflict, notFound } from "@/lib/http";
import type { Circuit } from "@/ssa/types";
import type { EngineWarning } from "@/ssa/warnings";

/** JSON with object keys sorted at every depth: the same circuit always gives the same text. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_k, v) =>
    v && typeof v === "object" && !Array.isArray(v)
      ? Object.fromEntries(Object.keys(v).sort().map((k) => [k, (v as Record<string, unknown>)[k]]))
      : v,
  );
}

/** sha256 (hex) of the canonical JSON: a version's content hash. */
export const contentHash = (c: Circuit): string => createHash("sha256").update(canonicalJson(c)).digest("hex");

export interface CircuitSummary {
  id: string; labId: string; name: string; versionCount: number; latestVersionId: string;
  updatedAt: Date; changedBy: string | null; lastRunAt: Date | null;
}
export interface VersionRow {
  id: string; circuitId: string; labId: string; number: number; circuit: Circuit; contentHash: string;
  sourceFormat: string; message: string | null; createdBy: string | null; createdByEmail: string | null; createdAt: Date;
  /** The warnings of the SBML import that made this version ([] for a circuit file). */
  importWarnings: EngineWarning[];
}

const isUnique = (e: unknown) => (e as { code?: string }).code === "23505";

/**
 * Stores a new circuit and its version 1 (with the warnings of the import that made it) in one transaction.
 * @throws 409 when the lab already has a circuit of that name.
 */
export async function createCircuit(
  labId: string, userId: string, circuit: Circuit, sourceFormat = "circuit", audit?: AuditFor<{ id: string; versionId: string }>,
  importWarnings: EngineWarning[] = [],
): Promise<{ id: string; versionId: string }> {
  try {
    return await audited(async (trx) => {
      const [c] = await trx("circuits").insert({ labId, name: circuit.name, createdBy: userId }).returning(["id"]);
      const [v] = await trx("circuit_versions").insert({
        circuitId: c.id, number: 1, circuit: canonicalJson(circuit), contentHash: contentHash(circuit), sourceFormat, createdBy: userId,
        importWarnings: JSON.stringify(importWarnings),
      }).returning(["id"]);
      return { id: String(c.id), versionId: String(v.id) };
    }, audit);
  } catch (e) {
    if (isUnique(e)) throw conflict(`circuit.name: the lab already has a circuit named "${circuit.name}"`);
    throw e;
  }
}

/**
 * Saves an edit as the next version (with the warnings of the import that made it); an edit
 * identical to an existing version returns that version instead (`created: false`).
 */
export async function addVersion(
  circuitId: string, userId: string, circuit: Circuit, message?: string, sourceFormat = "circuit",
  audit?: AuditFor<{ versionId: string; number: number; created: boolean }>, importWarnings: EngineWarning[] = [],
): Promise<{ versionId: string; number: number; created: boolean }> {
  const hash = contentHash(circuit);
  return audited(async (trx) => {
    // Lock the circuit row so concurrent saves get consecutive numbers.
    const c = await trx("circuits").where({ id: circuitId }).forUpdate().first("id", "name");
    if (!c) throw notFound("circuit");
    const same = await trx("circuit_versions").where({ circuitId, contentHash: hash }).first("id", "number");
    if (same) return { versionId: String(same.id), number: same.number, created: false };
    const last = await trx("circuit_versions").where({ circuitId }).max<{ max: number }[]>("number as max");
    const number = (last[0]?.max ?? 0) + 1;
    const [v] = await trx("circuit_versions").insert({
      circuitId, number, circuit: canonicalJson(circuit), contentHash: hash, sourceFormat, message: message ?? null, createdBy: userId,
      importWarnings: JSON.stringify(importWarnings),
    }).returning(["id"]);
    if (circuit.name !== c.name) {
      try {
        await trx("circuits").where({ id: circuitId }).update({ name: circuit.name, updatedAt: trx.fn.now() });
      } catch (e) {
        if (isUnique(e)) throw conflict(`circuit.name: the lab already has a circuit named "${circuit.name}"`);
        throw e;
      }
    } else {
      await trx("circuits").where({ id: circuitId }).update({ updatedAt: trx.fn.now() });
    }
    return { versionId: String(v.id), number, created: true };
  }, audit);
}

/** The lab's circuits, newest change first, optionally filtered by a name fragment. */
export async function listCircuits(labId: string, opts: { q?: string; limit?: number; offset?: number } = {}): Promise<CircuitSummary[]> {
  const q = db("circuits as c")
    .where("c.labId", labId)
    .select(
      "c.id", "c.labId", "c.name", "c.updatedAt",
      db.raw("(select count(*)::int from circuit_versions v where v.circuit_id = c.id) as version_count"),
      db.raw("(select v.id from circuit_versions v where v.circuit_id = c.id order by v.number desc limit 1) as latest_version_id"),
      db.raw("(select u.email from circuit_versions v left join users u on u.id = v.created_by where v.circuit_id = c.id order by v.number desc limit 1) as changed_by"),
      db.raw("(select max(r.created_at) from runs r join circuit_versions v on v.id = r.version_id where v.circuit_id = c.id) as last_run_at"),
    )
    .orderBy("c.updatedAt", "desc")
    .limit(opts.limit ?? 200)
    .offset(opts.offset ?? 0);
  if (opts.q) q.whereILike("c.name", `%${opts.q.replace(/[%_\\]/g, (m) => `\\${m}`)}%`);
  const rows = await q;
  return rows.map((r: CircuitSummary) => ({ ...r, id: String(r.id), labId: String(r.labId), latestVersionId: String(r.latestVersionId) }));
}

export async function getCircuit(id: string): Promise<{ id: string; labId: string; name: string; createdAt: Date; updatedAt: Date } | null> {
  const row = await db("circuits").where({ id }).first("id", "labId", "name", "createdAt", "updatedAt");
  return row ? { ...row, id: String(row.id), labId: String(row.labId) } : null;
}

export interface VersionInfo {
  id: string; number: number; contentHash: string; message: string | null; sourceFormat: string; createdAt: Date; createdByEmail: string | null;
  importWarnings: EngineWarning[];
}

/** A circuit's versions, newest first, without the circuit bodies. */
export async function listVersions(circuitId: string): Promise<VersionInfo[]> {
  const rows = await db("circuit_versions as v").leftJoin("users as u", "u.id", "v.createdBy")
    .where("v.circuitId", circuitId).orderBy("v.number", "desc")
    .select("v.id", "v.number", "v.contentHash", "v.message", "v.sourceFormat", "v.createdAt", "u.email as createdByEmail", "v.importWarnings");
  return rows.map((r: VersionInfo) => ({ ...r, id: String(r.id) }));
}

/** A version with its circuit and its lab, or null. */
export async function getVersion(id: string): Promise<VersionRow | null> {
  const row = await db("circuit_versions as v").join("circuits as c", "c.id", "v.circuitId").leftJoin("users as u", "u.id", "v.createdBy")
    .where("v.id", id)
    .first("v.id", "v.circuitId", "c.labId", "v.number", "v.circuit", "v.contentHash", "v.sourceFormat", "v.message", "v.createdBy", "u.email as createdByEmail", "v.createdAt", "v.importWarnings");
  return row ? { ...row, id: String(row.id), circuitId: String(row.circuitId), labId: String(row.labId) } : null;
}

/** Deletes a circuit; false when it was gone already (`audit` sees which, and records nothing then). */
export async function deleteCircuit(id: string, audit?: AuditFor<boolean>): Promise<boolean> {
  return audited(async (trx) => (await trx("circuits").where({ id }).delete()) > 0, audit);
}
