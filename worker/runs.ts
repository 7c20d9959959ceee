// Run jobs, a thin adapter: take a job, call the engine (ssa/node/run-engine.ts) on the worker's
// pool, store through lib/data. One job per chunk of cells, then one finalize job that merges the
// chunks; a trace is one job.
import { hostname } from "node:os";
import { performance } from "node:perf_hooks";

import type { Job } from "pg-boss";
import { ZodError } from "zod";

import { countRunChunksDone, getRunStatus, hasRunChunk, insertRunChunk, listRunChunkPartials, markRunStarted, storeRunResult, type RunResultParts } from "../lib/data/run-chunks";
import { failRun, getRun, getRunCircuit, getRunImportWarnings, type RunRow } from "../lib/data/runs";
import { Queues, RunChunkJob, RunFinalizeJob } from "../lib/jobs";
import { engineOptionsOfRun } from "../lib/schemas/run-options";
import { RUN_LIMITS } from "../lib/schemas/runs";
import type { EnginePool } from "../ssa/node/engine-pool";
import { finalizeRun, simulateChunk, simulateTrace } from "../ssa/node/run-engine";
import { ENGINE_VERSION, reproducesResultsOf } from "../ssa/version";
import { onRunFinished } from "./hooks";

const WORKER_ID = `${hostname()}:${process.pid}`;

/** A chunk that cannot be computed whatever the retries (bad input, a runaway cell). */
class InputError extends Error {}

/** Errors of the engine, by name, that retrying cannot fix (the circuit or the settings cause them). */
const PERMANENT_ENGINE_ERRORS = ["OdeError", "CircuitError", "SteadyStateError"];

/** Errors that retrying cannot fix: the run fails at once with the reason. */
const isPermanent = (e: unknown) => e instanceof InputError || e instanceof RangeError || e instanceof TypeError || e instanceof ZodError
  || (e instanceof Error && PERMANENT_ENGINE_ERRORS.includes(e.name));
const reasonOf = (e: unknown) => (e instanceof ZodError ? `settings: ${e.issues[0]?.message ?? "invalid"}` : e instanceof Error ? e.message : String(e));

export interface RunDeps {
  pool: EnginePool;
  send: (queue: string, data: object, options: { singletonKey: string }) => Promise<unknown>;
}

/** Polls the run's status while `work` runs and aborts it when the run is cancelled. */
async function whileNotCancelled<T>(runId: string, work: (signal: AbortSignal) => Promise<T>): Promise<T | null> {
  const ac = new AbortController();
  const timer = setInterval(async () => {
    const status = await getRunStatus(runId).catch(() => undefined);
    if (status !== undefined && status !== "running") ac.abort();
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

/** Fails the run with the reason of `e` and runs the finished hook. */
async function failWith(runId: string, reason: string): Promise<void> {
  await failRun(runId, reason);
  const failed = await getRun(runId);
  if (failed) await onRunFinished(failed);
}

/** One chunk of cells: compute its partial statistics and store them once. */
export async function handleChunk(job: Job<unknown> & { retryCount?: number; retryLimit?: number }, deps: RunDeps): Promise<void> {
  const { runId, chunkIndex } = RunChunkJob.parse(job.data);
  const run = await getRun(runId);
  if (!run || !["queued", "running"].includes(run.status)) return; // cancelled, failed, deleted or done
  await markRunStarted(runId);
  try {
    if (run.kind === "trace") return await finishTrace(run, deps.pool);
    // A run queued under an engine that drew its cells differently cannot be finished by this one:
    // its chunks would mix two engines' numbers under one recorded version.
    if (!reproducesResultsOf(run.engineVersion, run.method as "ssa" | "tau")) {
      throw new InputError(`engine_version: queued under ${run.engineVersion}, whose ${run.method} results this worker (${ENGINE_VERSION}) does not reproduce; launch the run again`);
    }
    if (!(await hasRunChunk(runId, chunkIndex))) {
      const options = engineOptionsOfRun(run);
      const first = chunkIndex * RUN_LIMITS.chunkCells;
      const last = Math.min(run.settings.runs, first + RUN_LIMITS.chunkCells);
      const circuit = await getRunCircuit(runId);
      const t0 = performance.now();
      // The pool's thread compiles the circuit and chooses the burn-in (once per thread and run).
      const chunk = await whileNotCancelled(runId, (signal) => simulateChunk(deps.pool, circuit, options, first, last, "stored", signal));
      if (!chunk) return; // cancelled while computing
      await insertRunChunk({
        runId, chunkIndex, firstCell: first, cellCount: last - first, partial: chunk.bytes, events: chunk.events,
        wallS: (performance.now() - t0) / 1000, worker: WORKER_ID,
      });
    }
    const counted = await countRunChunksDone(runId);
    if (counted && counted.chunksDone === counted.chunksTotal) {
      await deps.send(Queues.runFinalize, { runId }, { singletonKey: `finalize:${runId}` });
    }
  } catch (e) {
    const lastTry = (job.retryCount ?? 0) >= (job.retryLimit ?? 0);
    if (isPermanent(e) || lastTry) {
      return failWith(runId, isPermanent(e) ? reasonOf(e) : `chunk ${chunkIndex} failed ${(job.retryCount ?? 0) + 1} times: ${reasonOf(e)}`);
    }
    throw e; // pg-boss retries it
  }
}

/** A deterministic trace: one job computes and stores the whole result. */
async function finishTrace(run: RunRow, pool: EnginePool): Promise<void> {
  const circuit = await getRunCircuit(run.id);
  const t0 = performance.now();
  const summary = await simulateTrace(pool, circuit, engineOptionsOfRun(run));
  summary.wall_s = (performance.now() - t0) / 1000;
  summary.warnings = [...(await getRunImportWarnings(run.id)), ...summary.warnings];
  const { trace, ...rest } = summary;
  await storeResult(run, { summary: rest as Record<string, unknown>, trace: trace ?? null, cells: null, events: 0, wallS: summary.wall_s });
}

/** Merges every chunk of a run in chunk order and stores the summary, trace, sample cells and per-cell statistics. */
export async function handleFinalize(job: Job<unknown>, deps: Pick<RunDeps, "pool">): Promise<void> {
  const { runId } = RunFinalizeJob.parse(job.data);
  const run = await getRun(runId);
  if (!run || run.status !== "running") return;
  try {
    const stored = await listRunChunkPartials(runId);
    if (stored.length !== run.chunksTotal) throw new Error(`finalize: ${stored.length} of ${run.chunksTotal} chunks present`);
    const circuit = await getRunCircuit(runId);
    const wallS = run.startedAt ? (Date.now() - new Date(run.startedAt).getTime()) / 1000 : 0;
    const result = await finalizeRun(deps.pool, circuit, engineOptionsOfRun(run), { stored }, {
      wallS, sampleCells: RUN_LIMITS.sampleCells, trace: true, cellStats: true,
    });
    if (result.traceError !== undefined) console.warn(`run ${runId}: no mean-field trace: ${result.traceError}`);
    const { summary } = result;
    // The version's import warnings first, as `cli simulate` of the SBML file prints them.
    summary.warnings = [...(await getRunImportWarnings(runId)), ...summary.warnings];
    await storeResult(run, {
      summary: summary as unknown as Record<string, unknown>, trace: result.trace, cells: result.cells,
      events: summary.events, wallS, cellStatsGz: result.cellStatsGz,
    });
  } catch (e) {
    if (isPermanent(e)) return failWith(runId, reasonOf(e));
    throw e;
  }
}

async function storeResult(run: RunRow, parts: RunResultParts): Promise<void> {
  if (await storeRunResult(run, parts)) {
    const done = await getRun(run.id);
    if (done) await onRunFinished(done);
  }
}
