/**
 * The background worker's reads and writes of a run in progress: its status, its chunks'
 * partial statistics (run_chunks) and its stored result (run_results). The worker
 * (worker/runs.ts) calls these and holds no SQL of its own.
 */
import { db } from "@/db/client";
import { gzipJson, type RunRow } from "@/lib/data/runs";

/** A run's status now, or null when it is gone (deleted) or cannot be read. */
export async function getRunStatus(runId: string): Promise<string | null> {
  const row = await db("runs").where({ id: runId }).first("status");
  return row ? String(row.status) : null;
}

/** Marks a queued run running (its start time is the first chunk's); a running one is left as it is. */
export async function markRunStarted(runId: string): Promise<void> {
  await db("runs").where({ id: runId, status: "queued" }).update({ status: "running", startedAt: db.fn.now() });
}

/** Whether chunk `chunkIndex` of the run is stored already (a retried or duplicated job). */
export async function hasRunChunk(runId: string, chunkIndex: number): Promise<boolean> {
  return Boolean(await db("run_chunks").where({ runId, chunkIndex }).first("chunkIndex"));
}

/**
 * Stores one chunk's partial statistics (ssa/node/run-steps.ts encodeChunk), once: the primary
 * key (run_id, chunk_index) makes a retried or duplicated chunk land once.
 */
export async function insertRunChunk(c: {
  runId: string; chunkIndex: number; firstCell: number; cellCount: number; partial: Uint8Array; events: number; wallS: number; worker: string;
}): Promise<void> {
  await db("run_chunks").insert({ ...c, partial: Buffer.from(c.partial.buffer, c.partial.byteOffset, c.partial.byteLength) })
    .onConflict(["runId", "chunkIndex"]).ignore();
}

/** Counts a running run's stored chunks into `chunks_done`: the new count and the total, or null when the run is not running. */
export async function countRunChunksDone(runId: string): Promise<{ chunksDone: number; chunksTotal: number } | null> {
  const [counted] = await db("runs").where({ id: runId, status: "running" })
    .update({ chunksDone: db("run_chunks").where({ runId }).count("*") })
    .returning(["chunksDone", "chunksTotal"]);
  return counted ? { chunksDone: Number(counted.chunksDone), chunksTotal: Number(counted.chunksTotal) } : null;
}

/** The stored partials of a run's chunks, in chunk order. */
export async function listRunChunkPartials(runId: string): Promise<Uint8Array[]> {
  const rows = await db("run_chunks").where({ runId }).orderBy("chunkIndex").select("partial");
  return rows.map((r) => r.partial as Buffer);
}

/** What a finished run stores: its summary, the mean-field trace, the sample cells and the per-cell statistics. */
export interface RunResultParts {
  summary: Record<string, unknown>;
  trace: unknown;
  cells: unknown;
  events: number;
  wallS: number;
  cellStatsGz?: Uint8Array | null;
}

/**
 * Stores a running run's result and marks it succeeded, in one transaction; the chunks' partial
 * statistics (~7 MB per 1,000 ring-timer cells) are emptied then, their rows kept as provenance
 * (who computed which cells). Returns whether this call finished the run (false: it was
 * finished, cancelled or deleted meanwhile).
 */
export async function storeRunResult(run: Pick<RunRow, "id" | "chunksTotal">, r: RunResultParts): Promise<boolean> {
  const summaryGz = gzipJson(r.summary);
  const noise = { stationary: r.summary.stationary, final: r.summary.final, period: stripHistograms(r.summary.period) };
  const stats = r.cellStatsGz ? Buffer.from(r.cellStatsGz.buffer, r.cellStatsGz.byteOffset, r.cellStatsGz.byteLength) : null;
  return db.transaction(async (trx) => {
    await trx("run_results").insert({
      runId: run.id, summaryGz, traceGz: r.trace ? gzipJson(r.trace) : null, cellsGz: r.cells ? gzipJson(r.cells) : null,
      noise: JSON.stringify(noise), summaryBytes: summaryGz.length, cellStatsGz: stats,
      // Kept beside the gzipped summary so the run's own JSON can carry them without unpacking it.
      warnings: JSON.stringify(Array.isArray(r.summary.warnings) ? r.summary.warnings : []),
    }).onConflict("runId").ignore();
    const n: number = await trx("runs").where({ id: run.id, status: "running" })
      .update({ status: "succeeded", finishedAt: trx.fn.now(), events: r.events, wallS: r.wallS, chunksDone: run.chunksTotal });
    if (n) await trx("run_chunks").where({ runId: run.id }).update({ partial: Buffer.alloc(0) });
    return n > 0;
  });
}

/** The noise column keeps the period statistics without their histograms (the summary has them). */
function stripHistograms(period: unknown): unknown {
  if (!period || typeof period !== "object") return period;
  return Object.fromEntries(Object.entries(period as Record<string, Record<string, unknown>>).map(([k, v]) => {
    const { histogram: _h, ...rest } = v;
    return [k, rest];
  }));
}
