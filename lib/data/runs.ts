import { gunzipSync, gzipSync } from "node:zlib";

import type { Knex } from "knex";

import { db } from "@/db/client";
import { audited, type AuditFor } from "@/lib/data/audit";
import type { RunSettings } from "@/lib/schemas/run-options";
import type { Circuit } from "@/ssa/types";
import type { EngineWarning } from "@/ssa/warnings";

export type RunStatus = "queued" | "running" | "succeeded" | "failed" | "cancelled";

export interface RunRow {
  id: string; labId: string; versionId: string; circuitId: string; circuitName: string; versionNumber: number;
  kind: "trace" | "ensemble"; method: "ode" | "ssa" | "tau"; settings: RunSettings; seed: number;
  status: RunStatus; chunksTotal: number; chunksDone: number; error: string | null; engineVersion: string;
  createdBy: string | null; createdByEmail: string | null; createdAt: Date; startedAt: Date | null; finishedAt: Date | null;
  cancelRequestedAt: Date | null; wallS: number | null; events: number | null;
  /** The warnings of the finished run's summary (its version's import warnings first); null before it has one. */
  warnings: EngineWarning[] | null;
}

const RUN_COLUMNS = [
  "r.id", "r.labId", "r.versionId", "v.circuitId", "c.name as circuitName", "v.number as versionNumber", "r.kind", "r.method",
  "r.settings", "r.seed", "r.status", "r.chunksTotal", "r.chunksDone", "r.error", "r.engineVersion", "r.createdBy",
  "u.email as createdByEmail", "r.createdAt", "r.startedAt", "r.finishedAt", "r.cancelRequestedAt", "r.wallS", "r.events",
  "rr.warnings",
];

function runsQuery(q: Knex | Knex.Transaction = db) {
  return q("runs as r").join("circuit_versions as v", "v.id", "r.versionId").join("circuits as c", "c.id", "v.circuitId")
    .leftJoin("users as u", "u.id", "r.createdBy").leftJoin("run_results as rr", "rr.runId", "r.id");
}

function toRun(r: Record<string, unknown>): RunRow {
  return {
    ...(r as unknown as RunRow),
    id: String(r.id), labId: String(r.labId), versionId: String(r.versionId), circuitId: String(r.circuitId),
    seed: Number(r.seed), events: r.events == null ? null : Number(r.events),
  };
}

export async function getRun(id: string, q: Knex | Knex.Transaction = db): Promise<RunRow | null> {
  const row = await runsQuery(q).where("r.id", id).first(RUN_COLUMNS);
  return row ? toRun(row) : null;
}

export async function listRuns(labId: string, f: { status?: RunStatus; versionId?: string; circuitId?: string; limit: number; offset: number }): Promise<{ runs: RunRow[]; total: number }> {
  const base = runsQuery().where("r.labId", labId);
  if (f.status) base.where("r.status", f.status);
  if (f.versionId) base.where("r.versionId", f.versionId);
  if (f.circuitId) base.where("v.circuitId", f.circuitId);
  const [rows, total] = await Promise.all([
    base.clone().select(RUN_COLUMNS).orderBy("r.createdAt", "desc").orderBy("r.id", "desc").limit(f.limit).offset(f.offset),
    base.clone().count<{ count: string }[]>("* as count"),
  ]);
  return { runs: rows.map(toRun), total: Number(total[0]?.count ?? 0) };
}

/** Unfinished work of a lab and of a user (lib/run-budget.ts `QueuedWork`). */
export interface QueuedWork { labCost: number; labRuns: number; userCost: number; userRuns: number }

/**
 * The lab's and the user's queued or running runs: how many, and their cost still to do (the
 * share of chunks not done yet), in cell-events. Every design run of a comparison counts.
 */
export async function getQueuedWork(labId: string, userId: string, q: Knex | Knex.Transaction = db): Promise<QueuedWork> {
  const left = "cost * (chunks_total - chunks_done)::float8 / chunks_total";
  const r = await q("runs").whereIn("status", ["queued", "running"]).where((w) => w.where("labId", labId).orWhere("createdBy", userId))
    .first(q.raw(`count(*) filter (where lab_id = ?) as lab_runs, coalesce(sum(${left}) filter (where lab_id = ?), 0) as lab_cost,
      count(*) filter (where created_by = ?) as user_runs, coalesce(sum(${left}) filter (where created_by = ?), 0) as user_cost`, [labId, labId, userId, userId]));
  return { labCost: Number(r?.labCost ?? 0), labRuns: Number(r?.labRuns ?? 0), userCost: Number(r?.userCost ?? 0), userRuns: Number(r?.userRuns ?? 0) };
}

/**
 * Takes the lab's and then the user's launch locks (held to the end of `trx`) and reads their
 * queued work: two launches into one lab, or by one user, run this one at a time, so each sees
 * what the other stored. Always lab before user, so two launches never wait on each other in a circle.
 */
export async function lockQueuedWork(trx: Knex.Transaction, labId: string, userId: string): Promise<QueuedWork> {
  await trx.raw("select pg_advisory_xact_lock(hashtextextended(?, 0))", [`burstwise.run-queue.lab.${labId}`]);
  await trx.raw("select pg_advisory_xact_lock(hashtextextended(?, 0))", [`burstwise.run-queue.user.${userId}`]);
  return getQueuedWork(labId, userId, trx);
}

/** Checks the queued work read under the locks, and throws to refuse (nothing is stored then). */
export type QueueGuard = (queued: QueuedWork) => void;

/** Stores a queued run of expected `cost` (cell-events) once `guard` accepts the lab's and the user's queued work. */
export async function insertRun(row: {
  labId: string; versionId: string; kind: "trace" | "ensemble"; method: string; settings: RunSettings; seed: number;
  chunksTotal: number; engineVersion: string; createdBy: string; cost: number;
}, guard: QueueGuard, audit?: AuditFor<string>): Promise<string> {
  return audited(async (trx) => {
    guard(await lockQueuedWork(trx, row.labId, row.createdBy));
    const [r] = await trx("runs").insert({ ...row, settings: JSON.stringify(row.settings) }).returning(["id"]);
    return String(r.id);
  }, audit);
}

/** Marks a queued or running run cancelled; false when it had already finished (`audit` sees which). */
export async function cancelRun(id: string, audit?: AuditFor<boolean>): Promise<boolean> {
  return audited(async (trx) => {
    const n = await trx("runs").where({ id }).whereIn("status", ["queued", "running"])
      .update({ status: "cancelled", cancelRequestedAt: trx.fn.now(), finishedAt: trx.fn.now() });
    return n > 0;
  }, audit);
}

/** Marks an unfinished run failed with a reason the user can read. */
export async function failRun(id: string, error: string): Promise<void> {
  await db("runs").where({ id }).whereIn("status", ["queued", "running"]).update({ status: "failed", error: error.slice(0, 2000), finishedAt: db.fn.now() });
}

/** Deletes a run; false when it was gone already (`audit` sees which, and records nothing then). */
export async function deleteRun(id: string, audit?: AuditFor<boolean>): Promise<boolean> {
  return audited(async (trx) => (await trx("runs").where({ id }).delete()) > 0, audit);
}

/** The warnings of the SBML import that made a run's version ([] for a circuit file). */
export async function getRunImportWarnings(runId: string): Promise<EngineWarning[]> {
  const row = await db("runs as r").join("circuit_versions as v", "v.id", "r.versionId").where("r.id", runId).first("v.importWarnings");
  return (row?.importWarnings as EngineWarning[] | undefined) ?? [];
}

/** The circuit a run ran (its version's stored JSON). */
export async function getRunCircuit(runId: string): Promise<Circuit> {
  const row = await db("runs as r").join("circuit_versions as v", "v.id", "r.versionId").where("r.id", runId).first("v.circuit");
  return row.circuit as Circuit;
}

export const gzipJson = (value: unknown): Buffer => gzipSync(Buffer.from(JSON.stringify(value)), { level: 6 });
export const gunzipJson = <T>(buf: Buffer): T => JSON.parse(gunzipSync(buf).toString("utf8")) as T;

/** The stored result of a finished run as JSON texts (summary, and the trace when there is one). */
export async function getRunSummaryParts(runId: string): Promise<{ summary: string; trace: string | null } | null> {
  const row = await db("run_results").where({ runId }).first("summaryGz", "traceGz");
  if (!row) return null;
  return { summary: gunzipSync(row.summaryGz).toString("utf8"), trace: row.traceGz ? gunzipSync(row.traceGz).toString("utf8") : null };
}

export async function getRunSampleCells<T>(runId: string): Promise<T | null> {
  const row = await db("run_results").where({ runId }).first("cellsGz");
  return row?.cellsGz ? gunzipJson<T>(row.cellsGz) : null;
}
