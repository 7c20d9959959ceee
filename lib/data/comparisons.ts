import { gunzipSync } from "node:zlib";

import type { Knex } from "knex";

import { db } from "@/db/client";
import { audited, type AuditFor } from "@/lib/data/audit";
import { lockQueuedWork, type QueueGuard } from "@/lib/data/runs";
import type { RunSettings } from "@/lib/schemas/run-options";
import type { EngineWarning } from "@/ssa/warnings";

export type ComparisonStatus = "draft" | "running" | "succeeded" | "failed" | "cancelled";

/** What a comparison stores as its settings (every design's ensemble uses them). */
export interface ComparisonStoredSettings {
  method: "ssa" | "tau"; t_end: number; dt: number; runs: number; burn_in?: number;
}

export interface ComparisonRow {
  id: string; labId: string; name: string; description: string | null; kind: "designs" | "sweep";
  sweep: unknown; settings: ComparisonStoredSettings; seed: number; commonSeed: boolean;
  status: ComparisonStatus; error: string | null; createdBy: string | null; createdByEmail: string | null;
  createdAt: Date; launchedAt: Date | null; finishedAt: Date | null;
}

export interface DesignRow {
  id: string; comparisonId: string; position: number; label: string; versionId: string; circuitId: string;
  circuitName: string; versionNumber: number; overrides: Record<string, number>; sweepValues: Record<string, number> | null;
  runId: string | null; runStatus: string | null; runError: string | null; chunksDone: number | null; chunksTotal: number | null;
  runSeed: number | null; runFinishedAt: Date | null;
}

const COMPARISON_COLUMNS = [
  "c.id", "c.labId", "c.name", "c.description", "c.kind", "c.sweep", "c.settings", "c.seed", "c.commonSeed", "c.status",
  "c.error", "c.createdBy", "u.email as createdByEmail", "c.createdAt", "c.launchedAt", "c.finishedAt",
];

function toComparison(r: Record<string, unknown>): ComparisonRow {
  return { ...(r as unknown as ComparisonRow), id: String(r.id), labId: String(r.labId), seed: Number(r.seed), createdBy: r.createdBy == null ? null : String(r.createdBy) };
}

export async function getComparison(id: string, q: Knex | Knex.Transaction = db): Promise<ComparisonRow | null> {
  const row = await q("comparisons as c").leftJoin("users as u", "u.id", "c.createdBy").where("c.id", id).first(COMPARISON_COLUMNS);
  return row ? toComparison(row) : null;
}

/** The stored noise table (null until every design run has succeeded). */
export async function getComparisonResults<T>(id: string): Promise<T | null> {
  const row = await db("comparisons").where({ id }).first("results");
  return (row?.results as T | undefined) ?? null;
}

/** A comparison's designs in order, with their latest run's state. */
export async function listDesigns(comparisonId: string, q: Knex | Knex.Transaction = db): Promise<DesignRow[]> {
  const rows = await q("comparison_designs as d")
    .join("circuit_versions as v", "v.id", "d.versionId").join("circuits as ci", "ci.id", "v.circuitId")
    .leftJoin("runs as r", "r.id", "d.runId")
    .where("d.comparisonId", comparisonId).orderBy("d.position")
    .select("d.id", "d.comparisonId", "d.position", "d.label", "d.versionId", "v.circuitId", "ci.name as circuitName", "v.number as versionNumber",
      "d.overrides", "d.sweepValues", "d.runId", "r.status as runStatus", "r.error as runError", "r.chunksDone", "r.chunksTotal", "r.seed as runSeed", "r.finishedAt as runFinishedAt");
  return rows.map((r: Record<string, unknown>) => ({
    ...(r as unknown as DesignRow), id: String(r.id), comparisonId: String(r.comparisonId), versionId: String(r.versionId), circuitId: String(r.circuitId),
    runId: r.runId == null ? null : String(r.runId), runSeed: r.runSeed == null ? null : Number(r.runSeed),
  }));
}

export interface ComparisonListItem extends ComparisonRow { designs: number; runsDone: number; chunksDone: number; chunksTotal: number }

/** The lab's comparisons, newest first, with design counts and progress. */
export async function listComparisons(labId: string, f: { limit: number; offset: number }): Promise<{ comparisons: ComparisonListItem[]; total: number }> {
  const progress = db("comparison_designs as d").leftJoin("runs as r", "r.id", "d.runId")
    .groupBy("d.comparisonId")
    .select("d.comparisonId", db.raw("count(*)::int as designs"), db.raw("count(*) filter (where r.status = 'succeeded')::int as runs_done"),
      db.raw("coalesce(sum(r.chunks_done), 0)::int as chunks_done"), db.raw("coalesce(sum(r.chunks_total), 0)::int as chunks_total"))
    .as("p");
  const base = db("comparisons as c").where("c.labId", labId);
  const [rows, total] = await Promise.all([
    base.clone().leftJoin("users as u", "u.id", "c.createdBy").leftJoin(progress, "p.comparisonId", "c.id")
      .select([...COMPARISON_COLUMNS, "p.designs", "p.runsDone", "p.chunksDone", "p.chunksTotal"])
      .orderBy("c.createdAt", "desc").orderBy("c.id", "desc").limit(f.limit).offset(f.offset),
    base.clone().count<{ count: string }[]>("* as count"),
  ]);
  return {
    comparisons: rows.map((r: Record<string, unknown>) => ({
      ...toComparison(r), designs: Number(r.designs ?? 0), runsDone: Number(r.runsDone ?? 0), chunksDone: Number(r.chunksDone ?? 0), chunksTotal: Number(r.chunksTotal ?? 0),
    })),
    total: Number(total[0]?.count ?? 0),
  };
}

export interface NewDesign { position: number; label: string; versionId: string; overrides: Record<string, number>; sweepValues: Record<string, number> | null }

/** Stores a comparison and its designs in one transaction (status draft). */
export async function insertComparison(row: {
  labId: string; name: string; description: string | null; kind: "designs" | "sweep"; sweep: unknown;
  settings: ComparisonStoredSettings; seed: number; commonSeed: boolean; createdBy: string;
}, designs: NewDesign[], audit?: AuditFor<string>): Promise<string> {
  return audited(async (trx) => {
    const [c] = await trx("comparisons").insert({
      ...row, sweep: row.sweep == null ? null : JSON.stringify(row.sweep), settings: JSON.stringify(row.settings),
    }).returning(["id"]);
    const id = String(c.id);
    await trx("comparison_designs").insert(designs.map((d) => ({
      comparisonId: id, position: d.position, label: d.label, versionId: d.versionId,
      overrides: JSON.stringify(d.overrides), sweepValues: d.sweepValues ? JSON.stringify(d.sweepValues) : null,
    })));
    return id;
  }, audit);
}

export interface DesignRunInsert {
  designId: string; versionId: string; method: "ssa" | "tau"; settings: RunSettings; seed: number; chunksTotal: number;
  /** Expected cost in cell-events (lib/run-budget.ts). */
  cost: number;
}

/**
 * Starts a comparison: in one transaction, moves it from draft (or failed/cancelled) to running,
 * stores one queued run per design and points each design at its run. Returns the run ids in
 * design order, or null when the comparison was not in a launchable state (someone else won).
 * `guard` sees the lab's and the user's queued work first, under their launch locks, and may refuse.
 */
export async function insertDesignRuns(
  comparisonId: string, labId: string, createdBy: string, engineVersion: string, runs: DesignRunInsert[], guard: QueueGuard,
  audit?: AuditFor<string[] | null>,
): Promise<string[] | null> {
  return audited(async (trx) => {
    guard(await lockQueuedWork(trx, labId, createdBy));
    const claimed = await trx("comparisons").where({ id: comparisonId }).whereIn("status", ["draft", "failed", "cancelled"])
      .update({ status: "running", error: null, results: null, launchedAt: trx.fn.now(), finishedAt: null }).returning(["id"]);
    if (claimed.length === 0) return null;
    const ids: string[] = [];
    for (const r of runs) {
      const [run] = await trx("runs").insert({
        labId, versionId: r.versionId, kind: "ensemble", method: r.method, settings: JSON.stringify(r.settings), seed: r.seed,
        chunksTotal: r.chunksTotal, engineVersion, createdBy, cost: r.cost,
      }).returning(["id"]);
      ids.push(String(run.id));
      await trx("comparison_designs").where({ id: r.designId }).update({ runId: run.id });
    }
    return ids;
  }, audit);
}

/** Stores the noise table and marks the comparison succeeded; false when it was not running (already done). */
export async function storeComparisonResults(id: string, results: unknown): Promise<boolean> {
  const n = await db("comparisons").where({ id, status: "running" })
    .update({ status: "succeeded", results: JSON.stringify(results), finishedAt: db.fn.now(), error: null });
  return n > 0;
}

/** Ends a running comparison as failed or cancelled with a reason; false when it was not running. */
export async function endComparison(id: string, status: "failed" | "cancelled", error: string, q: Knex | Knex.Transaction = db): Promise<boolean> {
  const n = await q("comparisons").where({ id, status: "running" }).update({ status, error: error.slice(0, 2000), finishedAt: q.fn.now() });
  return n > 0;
}

/**
 * Cancels a running comparison and its unfinished design runs in one transaction; returns how
 * many runs it cancelled, or null when the comparison was not running.
 */
export async function cancelComparisonRuns(id: string, error: string, audit?: AuditFor<number | null>): Promise<number | null> {
  return audited(async (trx) => {
    if (!(await endComparison(id, "cancelled", error, trx))) return null;
    return cancelDesignRuns(id, trx);
  }, audit);
}

/**
 * Deletes a comparison after cancelling its unfinished design runs (which would otherwise go on as
 * loose runs). Returns the status it had and how many runs it cancelled, or null when it was gone already.
 */
export async function deleteComparison(id: string, audit?: AuditFor<{ status: ComparisonStatus; runsCancelled: number } | null>): Promise<{ status: ComparisonStatus; runsCancelled: number } | null> {
  return audited(async (trx) => {
    const row = await trx("comparisons").where({ id }).forUpdate().first("status");
    if (!row) return null;
    const runsCancelled = await cancelDesignRuns(id, trx);
    await trx("comparisons").where({ id }).delete();
    return { status: row.status as ComparisonStatus, runsCancelled };
  }, audit);
}

/** The comparison a run belongs to as a design (its latest run), or null. */
export async function getComparisonIdOfRun(runId: string): Promise<string | null> {
  const row = await db("comparison_designs").where({ runId }).first("comparisonId");
  return row ? String(row.comparisonId) : null;
}

/** Per-cell sums stored with a finished ensemble (ssa/cell-stats.ts encoding), or null. */
export async function getRunCellStats(runId: string): Promise<Float64Array | null> {
  const row = await db("run_results").where({ runId }).first("cellStatsGz");
  if (!row?.cellStatsGz) return null;
  const buf = gunzipSync(row.cellStatsGz);
  // Copy into an aligned buffer: a Buffer's offset in its pool need not be a multiple of 8.
  const out = new Float64Array(buf.length / 8);
  new Uint8Array(out.buffer).set(buf);
  return out;
}

/** The same per-cell sums still gzipped, as stored: for an engine thread to unzip (lib/comparisons.ts testDifference). */
export async function getRunCellStatsGz(runId: string): Promise<Buffer | null> {
  const row = await db("run_results").where({ runId }).first("cellStatsGz");
  return (row?.cellStatsGz as Buffer | undefined) ?? null;
}

/** The small per-species noise figures stored with a finished run (stationary, final, period without histograms). */
/** The warnings stored with a finished run's summary ([] when it has none or no result yet). */
export async function getRunWarnings(runId: string): Promise<EngineWarning[]> {
  const row = await db("run_results").where({ runId }).first("warnings");
  return (row?.warnings as EngineWarning[] | undefined) ?? [];
}

export async function getRunNoise<T>(runId: string): Promise<T | null> {
  const row = await db("run_results").where({ runId }).first("noise");
  return (row?.noise as T | undefined) ?? null;
}

/** Cancels a comparison's unfinished runs; returns how many were cancelled. */
export async function cancelDesignRuns(comparisonId: string, q: Knex | Knex.Transaction = db): Promise<number> {
  const ids = q("comparison_designs").where({ comparisonId }).whereNotNull("runId").select("runId");
  return q("runs").whereIn("id", ids).whereIn("status", ["queued", "running"])
    .update({ status: "cancelled", cancelRequestedAt: q.fn.now(), finishedAt: q.fn.now() });
}
