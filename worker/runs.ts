// Run jobs: one job per chunk of cells, then one finalize job that merges the chunks.
import { hostname } from "node:os";
import { performance } from "node:perf_hooks";
import { deserialize, serialize } from "node:v8";
import { gunzipSync, gzipSync } from "node:zlib";

import type { Job } from "pg-boss";
import type { Piscina } from "piscina";

import { db } from "../db/client";
import { failRun, getRun, getRunCircuit, getRunImportWarnings, gzipJson, type RunRow } from "../lib/data/runs";
import { Queues, RunChunkJob, RunFinalizeJob } from "../lib/jobs";
import { RUN_LIMITS } from "../lib/schemas/runs";
import { cellStatsOf, encodeCellStats } from "../ssa/cell-stats";
import { summarize, trajectory, type EnsembleOptions } from "../ssa/ensemble";
import { chooseBurnIn } from "../ssa/burn-in";
import { checkAgainstMeanField } from "../ssa/oscillation-checks";
import { compileModel, parseCircuitExpressions } from "../ssa/model";
import { compileParsedModel, type Model } from "../ssa/model-core";
import type { BurnInChoice } from "../ssa/stationarity";
import { runSimulation } from "../ssa/node/run";
import { solveOde } from "../ssa/ode";
import { mergePartials, type Partial } from "../ssa/stats";
import { ENGINE_VERSION, reproducesResultsOf } from "../ssa/version";
import { onRunFinished } from "./hooks";
import type { ChunkResult, ChunkTask } from "./tasks/cells";

const WORKER_ID = `${hostname()}:${process.pid}`;

/** A chunk that cannot be computed whatever the retries (bad input, a runaway cell). */
class InputError extends Error {}

/** Errors that retrying cannot fix: the run fails at once with the reason. */
const isPermanent = (e: unknown) => e instanceof InputError || e instanceof RangeError || e instanceof TypeError || (e instanceof Error && ["OdeError", "CircuitError", "SteadyStateError"].includes(e.name));
const reasonOf = (e: unknown) => (e instanceof Error ? e.message : String(e));

export function ensembleOptions(run: RunRow): EnsembleOptions {
  const s = run.settings;
  return {
    method: run.method as "ssa" | "tau", tEnd: s.t_end, dt: s.dt, seed: run.seed,
    ...(s.burn_in !== undefined ? { burnIn: s.burn_in } : {}),
    ...(s.tau_epsilon !== undefined ? { tauEpsilon: s.tau_epsilon } : {}),
    // The run's own limit, stored with it (older runs: the limit they were queued under).
    maxEventsPerCell: s.max_events_per_cell ?? RUN_LIMITS.maxEventsPerCell,
  };
}

/**
 * The run's burn-in: as stored when the user gave one, else from the circuit's relaxation time
 * (ssa/burn-in.ts). Every chunk and the finalize job must use the same value, and they do: the
 * choice depends only on the stored circuit, overrides and settings. Kept per run in this process
 * so the steady state is found once, not once per chunk.
 */
const burnInChoices = new Map<string, BurnInChoice>();
function chooseRunBurnIn(run: RunRow, model: Model): BurnInChoice {
  let choice = burnInChoices.get(run.id);
  if (!choice) {
    choice = chooseBurnIn(model, { tEnd: run.settings.t_end, burnIn: run.settings.burn_in });
    if (burnInChoices.size > 200) burnInChoices.clear(); // a bound, not a cache policy: recomputing is cheap
    burnInChoices.set(run.id, choice);
  }
  return choice;
}

export interface RunDeps {
  pool: Piscina<ChunkTask, ChunkResult>;
  send: (queue: string, data: object, options: { singletonKey: string }) => Promise<unknown>;
}

/** Polls the run's status while `work` runs and aborts it when the run is cancelled. */
async function whileNotCancelled<T>(runId: string, work: (signal: AbortSignal) => Promise<T>): Promise<T | null> {
  const ac = new AbortController();
  const timer = setInterval(async () => {
    const row = await db("runs").where({ id: runId }).first("status").catch(() => null);
    if (row && row.status !== "running") ac.abort();
  }, 1000);
  try {
    return await work(ac.signal);
  } catch (e) {
    if (ac.signal.aborted) return null;
    throw e;
  } finally {
    clearInterval(timer);
  }
}

/** One chunk of cells: compute its partial statistics and store them once. */
export async function handleChunk(job: Job<unknown> & { retryCount?: number; retryLimit?: number }, deps: RunDeps): Promise<void> {
  const { runId, chunkIndex } = RunChunkJob.parse(job.data);
  const run = await getRun(runId);
  if (!run || !["queued", "running"].includes(run.status)) return; // cancelled, failed, deleted or done
  await db("runs").where({ id: runId, status: "queued" }).update({ status: "running", startedAt: db.fn.now() });
  try {
    if (run.kind === "trace") return await finishTrace(run);
    // A run queued under an engine that drew its cells differently cannot be finished by this one:
    // its chunks would mix two engines' numbers under one recorded version.
    if (!reproducesResultsOf(run.engineVersion, run.method as "ssa" | "tau")) {
      throw new InputError(`engine_version: queued under ${run.engineVersion}, whose ${run.method} results this worker (${ENGINE_VERSION}) does not reproduce; launch the run again`);
    }
    const have = await db("run_chunks").where({ runId, chunkIndex }).first("chunkIndex");
    if (!have) {
      const first = chunkIndex * RUN_LIMITS.chunkCells;
      const last = Math.min(run.settings.runs, first + RUN_LIMITS.chunkCells);
      const circuit = await getRunCircuit(runId);
      const t0 = performance.now();
      const overrides = run.settings.overrides;
      const expressions = parseCircuitExpressions(circuit, overrides);
      const { burnIn } = chooseRunBurnIn(run, compileParsedModel(circuit, overrides, expressions));
      const result = await whileNotCancelled(runId, (signal) =>
        deps.pool.run({ circuit, overrides, expressions, options: { ...ensembleOptions(run), burnIn }, first, last }, { signal }));
      if (!result) return; // cancelled while computing
      if ("inputError" in result) throw new InputError(result.inputError);
      const { partial } = result;
      const blob = gzipSync(serialize(partial), { level: 1 });
      // The primary key (run_id, chunk_index) makes a retried or duplicated chunk land once.
      await db("run_chunks").insert({
        runId, chunkIndex, firstCell: first, cellCount: last - first, partial: blob, events: partial.events,
        wallS: (performance.now() - t0) / 1000, worker: WORKER_ID,
      }).onConflict(["runId", "chunkIndex"]).ignore();
    }
    const [counted] = await db("runs").where({ id: runId, status: "running" })
      .update({ chunksDone: db("run_chunks").where({ runId }).count("*") })
      .returning(["chunksDone", "chunksTotal"]);
    if (counted && counted.chunksDone === counted.chunksTotal) {
      await deps.send(Queues.runFinalize, { runId }, { singletonKey: `finalize:${runId}` });
    }
  } catch (e) {
    const lastTry = (job.retryCount ?? 0) >= (job.retryLimit ?? 0);
    if (isPermanent(e) || lastTry) {
      const reason = isPermanent(e) ? reasonOf(e) : `chunk ${chunkIndex} failed ${(job.retryCount ?? 0) + 1} times: ${reasonOf(e)}`;
      await failRun(runId, reason);
      const failed = await getRun(runId);
      if (failed) await onRunFinished(failed);
      return;
    }
    throw e; // pg-boss retries it
  }
}

/** A deterministic trace: one job computes and stores the whole result. */
async function finishTrace(run: RunRow): Promise<void> {
  const circuit = await getRunCircuit(run.id);
  const s = run.settings;
  const summary = await runSimulation(circuit, {
    method: "ode", tEnd: s.t_end, dt: s.dt, units: s.units, overrides: s.overrides, ...(s.burn_in !== undefined ? { burnIn: s.burn_in } : {}),
  });
  summary.warnings = [...(await getRunImportWarnings(run.id)), ...summary.warnings];
  const { trace, ...rest } = summary;
  await storeResult(run, rest as Record<string, unknown>, trace ?? null, null, 0, summary.wall_s);
}

/** Merges every chunk of a run in chunk order and stores the summary, trace and sample cells. */
export async function handleFinalize(job: Job<unknown>): Promise<void> {
  const { runId } = RunFinalizeJob.parse(job.data);
  const run = await getRun(runId);
  if (!run || run.status !== "running") return;
  try {
    const rows = await db("run_chunks").where({ runId }).orderBy("chunkIndex").select("partial", "wallS");
    if (rows.length !== run.chunksTotal) throw new Error(`finalize: ${rows.length} of ${run.chunksTotal} chunks present`);
    let merged: Partial | null = null;
    for (const r of rows) {
      const p = deserialize(gunzipSync(r.partial)) as Partial;
      merged = merged ? mergePartials(merged, p) : p;
    }
    const circuit = await getRunCircuit(runId);
    const model = compileModel(circuit, run.settings.overrides);
    const choice = chooseRunBurnIn(run, model);
    burnInChoices.delete(run.id);
    const options = { ...ensembleOptions(run), burnIn: choice.burnIn };
    const wallS = run.startedAt ? (Date.now() - new Date(run.startedAt).getTime()) / 1000 : 0;
    const summary = summarize(model, options, merged!, { units: run.settings.units, wallS, burnIn: choice });
    checkAgainstMeanField(model, summary, { tEnd: options.tEnd, dt: options.dt, burnIn: choice.burnIn });
    // The version's import warnings first, as `cli simulate` of the SBML file prints them.
    summary.warnings = [...(await getRunImportWarnings(runId)), ...summary.warnings];
    let trace: Record<string, number[]> | null = null;
    try {
      trace = solveOde(model, { tEnd: options.tEnd, dt: options.dt, units: run.settings.units }).trace;
    } catch (e) {
      console.warn(`run ${runId}: no mean-field trace: ${reasonOf(e)}`);
    }
    const n = Math.min(RUN_LIMITS.sampleCells, run.settings.runs);
    const cells = Array.from({ length: n }, (_, i) => trajectory(model, options, i, run.settings.units));
    // Per-cell sums for the bootstrap over cells (comparisons); sizes measured in README.md.
    const stats = encodeCellStats(cellStatsOf(merged!));
    const cellStatsGz = gzipSync(Buffer.from(stats.buffer, stats.byteOffset, stats.byteLength), { level: 1 });
    await storeResult(run, summary as unknown as Record<string, unknown>, trace, cells, summary.events, wallS, cellStatsGz);
  } catch (e) {
    if (isPermanent(e)) {
      await failRun(runId, reasonOf(e));
      const failed = await getRun(runId);
      if (failed) await onRunFinished(failed);
      return;
    }
    throw e;
  }
}

async function storeResult(run: RunRow, summary: Record<string, unknown>, trace: unknown, cells: unknown, events: number, wallS: number, cellStatsGz: Buffer | null = null): Promise<void> {
  const summaryGz = gzipJson(summary);
  const noise = { stationary: summary.stationary, final: summary.final, period: stripHistograms(summary.period) };
  const finished: number = await db.transaction(async (trx) => {
    await trx("run_results").insert({
      runId: run.id, summaryGz, traceGz: trace ? gzipJson(trace) : null, cellsGz: cells ? gzipJson(cells) : null,
      noise: JSON.stringify(noise), summaryBytes: summaryGz.length, cellStatsGz,
      // Kept beside the gzipped summary so the run's own JSON can carry them without unpacking it.
      warnings: JSON.stringify(Array.isArray(summary.warnings) ? summary.warnings : []),
    }).onConflict("runId").ignore();
    const n: number = await trx("runs").where({ id: run.id, status: "running" })
      .update({ status: "succeeded", finishedAt: trx.fn.now(), events, wallS, chunksDone: run.chunksTotal });
    // The merged result is stored: the chunks' partial statistics (~7 MB per 1,000 ring-timer
    // cells) are no longer needed; their rows stay as provenance (who computed which cells).
    if (n) await trx("run_chunks").where({ runId: run.id }).update({ partial: Buffer.alloc(0) });
    return n;
  });
  if (finished) {
    const done = await getRun(run.id);
    if (done) await onRunFinished(done);
  }
}

function stripHistograms(period: unknown): unknown {
  if (!period || typeof period !== "object") return period;
  return Object.fromEntries(Object.entries(period as Record<string, Record<string, unknown>>).map(([k, v]) => {
    const { histogram: _h, ...rest } = v;
    return [k, rest];
  }));
}
