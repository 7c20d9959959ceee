/**
 * The engine's entry points for a run, the same for the command line and the background worker
 * (and, through the server's EnginePool, the API's cell replays): simulateChunk, mergeChunks,
 * finalizeRun, simulateTrace, and simulateRun, which the command line calls and which is those
 * steps in a row. Each step runs on the one worker-thread pool (ssa/node/engine-pool.ts) when it
 * is given one, else on the calling thread: the same function (ssa/node/run-steps.ts) either way,
 * so a run's bytes do not depend on where, or in how many threads, its cells ran. Node only.
 */
import { availableParallelism } from "node:os";
import { performance } from "node:perf_hooks";
import { fileURLToPath } from "node:url";

import { ensembleOptionsOf, type EngineOptions } from "../engine-options";
import { chunkRanges, kernelFor, makeGrid } from "../ensemble";
import { mergePartials, type Partial, type SimulateSummary } from "../stats";
import { ModelInputError, type Circuit } from "../types";
import { EnginePool } from "./engine-pool";
import type { ChunkEncoding, EngineTask, FinalizeContext } from "./engine-protocol";
import { computeEngineTask } from "./engine-task";
import { getBurnIn, getModel } from "./model-cache";
import { chunkFolder, claimChunk, type RunResult, type StoredChunk } from "./run-steps";

export { decodeChunk, encodeChunk, mergeChunks, type RunResult, type StoredChunk } from "./run-steps";
export type { FinalizeContext } from "./engine-protocol";

/** The pool threads' module: the TypeScript source, or its bundled sibling when this file runs from the engine bundle (scripts/lib/engine-bundle.mjs). */
const ENGINE_TASK = import.meta.url.endsWith(".ts") ? "./engine-task.ts" : "./engine-task.mjs";

/** Default thread count: all cores (CONTRACT.md `--threads`). */
export const defaultThreads = (): number => Math.max(1, availableParallelism());

/**
 * The engine pool of a process that runs whole runs (the command line, the background worker):
 * no bound on its queue or on a task's time (a run's chunks wait their turn; cancelling aborts them).
 */
export function createRunPool(threads: number, o: { minThreads?: number } = {}): EnginePool {
  return new EnginePool({
    filename: fileURLToPath(new URL(ENGINE_TASK, import.meta.url)),
    threads, maxQueue: Infinity, maxWaitMs: Infinity, idleTimeoutMs: 60_000, minThreads: o.minThreads ?? 0,
  });
}

/** A step that failed on a thread, with the name of the error it threw there (error classes do not cross threads). */
export class EngineStepError extends Error {
  constructor(name: string, message: string) {
    super(message);
    this.name = name;
  }
}

/** The error a step threw, rebuilt on this side: input errors keep their class, so callers can tell bad input from failures. */
function errorOf(name: string, message: string): Error {
  if (name === "ModelInputError") return new ModelInputError(message);
  if (name === "RangeError") return new RangeError(message);
  if (name === "TypeError") return new TypeError(message);
  return new EngineStepError(name, message);
}

/** Runs one step on `pool`, or on this thread when there is none. @throws the step's error, rebuilt (errorOf). */
async function runStep<T>(pool: EnginePool | null, task: EngineTask, signal?: AbortSignal): Promise<T> {
  const outcome = pool ? await pool.run(task, Infinity, signal) : await computeEngineTask(task);
  if (!outcome.ok) throw errorOf(outcome.name, outcome.message);
  return outcome.value as T;
}

/**
 * Cells [first, last) of a run: their exact partial statistics, as the object or as the bytes
 * run_chunks stores (`encoding: "stored"`). The thread compiles the circuit and chooses the
 * burn-in (once per thread, ssa/node/model-cache.ts).
 * @throws RangeError / ModelInputError for bad input or a runaway cell; an AbortError when `signal` aborts.
 */
export async function simulateChunk(pool: EnginePool | null, circuit: Circuit, o: EngineOptions, first: number, last: number, encoding: "stored", signal?: AbortSignal): Promise<StoredChunk>;
export async function simulateChunk(pool: EnginePool | null, circuit: Circuit, o: EngineOptions, first: number, last: number, encoding?: "partial", signal?: AbortSignal): Promise<Partial>;
export async function simulateChunk(pool: EnginePool | null, circuit: Circuit, o: EngineOptions, first: number, last: number, encoding: ChunkEncoding = "partial", signal?: AbortSignal): Promise<Partial | StoredChunk> {
  return runStep(pool, { kind: "chunk", circuit, options: o, first, last, encoding }, signal);
}

/**
 * The finished run from its chunks (the stored encodings in chunk order, or the merged partial):
 * summary, checks, and what `context` asks for (trace, sample cells, per-cell statistics).
 */
export async function finalizeRun(pool: EnginePool | null, circuit: Circuit, o: EngineOptions, chunks: { stored: Uint8Array[] } | { merged: Partial }, context: FinalizeContext): Promise<RunResult> {
  return runStep(pool, { kind: "finalize", circuit, options: o, chunks, context });
}

/** The deterministic run (method "ode"), with wall_s 0. @throws OdeError when the mean field cannot be integrated. */
export async function simulateTrace(pool: EnginePool | null, circuit: Circuit, o: EngineOptions): Promise<SimulateSummary> {
  return runStep(pool, { kind: "trace", circuit, options: o });
}

export interface SimulateRunOptions {
  /** Threads computing cells, the calling one included (default: all cores); 1 computes on the calling thread, with no pool. */
  threads?: number;
  /** Cells per chunk; default about eight chunks per thread, between 1 and 250 cells. */
  chunk?: number;
  /** Filled in after the run: cells computed by pool threads (the rest ran on the caller), and how many threads the pool had. */
  report?: { workerCells: number; workers: number };
}

/**
 * One whole `simulate` run (CONTRACT.md §2), timed on this process's clock: the trace for
 * method "ode"; else the chunks over `threads` threads (this one and threads − 1 of the pool),
 * merged, then finalized here.
 * @throws ModelInputError / RangeError for bad input, OdeError when the mean field cannot be integrated.
 */
export async function simulateRun(circuit: Circuit, o: EngineOptions & SimulateRunOptions): Promise<SimulateSummary> {
  const t0 = performance.now();
  const { threads: wanted, chunk: chunkSize, report, ...options } = o;
  if (options.method === "ode") {
    const summary = await simulateTrace(null, circuit, options);
    summary.wall_s = (performance.now() - t0) / 1000;
    return summary;
  }
  ensembleOptionsOf(options); // a stochastic run needs a seed
  makeGrid(options.tEnd, options.dt); // validates before any thread starts
  const model = await getModel(circuit, options.overrides); // bad input fails here, before any thread starts
  kernelFor(model, ensembleOptionsOf(options)); // and so does a method the circuit cannot run (e.g. tau-leaping with a schedule)
  const runs = options.runs ?? 1;
  const threads = Math.max(1, Math.min(wanted ?? defaultThreads(), runs));
  const workers = threads - 1;
  // The pool's threads start now (minThreads), loading the engine while this thread looks for
  // the steady state behind the burn-in.
  const pool = workers > 0 ? createRunPool(workers, { minThreads: workers }) : null;
  let fixed: EngineOptions;
  try {
    // Chosen once here and handed to the chunks, so no thread looks for the steady state again.
    fixed = { ...options, burnIn: (await getBurnIn(model, options)).burnIn };
  } catch (e) {
    await pool?.close();
    throw e;
  }
  const chunk = chunkSize ?? Math.max(1, Math.min(250, Math.ceil(runs / (threads * 8))));
  const ranges = chunkRanges(runs, chunk);
  // The calling thread and threads − 1 pool threads claim chunks from one shared counter: no
  // thread waits for another to hand it work, and the merge is exact, so which thread ran which
  // cells never shows in the result (ssa/stats.ts).
  const claims = new Int32Array(new SharedArrayBuffer(Int32Array.BYTES_PER_ELEMENT));
  let merged: Partial | null = null;
  let callerCells = 0;
  const fold = (p: Partial | null) => {
    if (p) merged = merged ? mergePartials(merged, p) : p;
  };
  const lanes: Promise<void>[] = [];
  try {
    for (let w = 0; w < workers; w++) {
      lanes.push(runStep<Partial | null>(pool, { kind: "claim-chunks", circuit, options: fixed, ranges, claims }).then(fold));
    }
    // The calling thread claims one chunk at a time into its own fold, yielding between them so
    // the pool's messages (threads starting, results arriving) are handled while it works.
    const own = await chunkFolder(circuit, fixed);
    for (let r = claimChunk(ranges, claims); r; r = claimChunk(ranges, claims)) {
      await new Promise<void>((resolve) => setImmediate(resolve));
      own.add(r[0], r[1]);
    }
    callerCells = own.cells;
    fold(own.result());
    await Promise.all(lanes);
  } catch (e) {
    // Closing the pool ends the lanes still running; their rejections are expected, not news.
    for (const lane of lanes) lane.catch(() => undefined);
    throw e;
  } finally {
    await pool?.close();
  }
  const all = merged as Partial | null;
  if (!all || all.cells !== runs) throw new Error(`internal: merged ${all?.cells ?? 0} of ${runs} cells`);
  if (report) {
    report.workerCells = runs - callerCells;
    report.workers = workers;
  }
  const { summary } = await finalizeRun(null, circuit, options, { merged: all }, { wallS: 0, sampleCells: 0, trace: false, cellStats: false });
  // wall_s covers the intervals and the checks too (their cost is part of a run).
  summary.wall_s = (performance.now() - t0) / 1000;
  summary.events_per_s = summary.wall_s > 0 ? summary.events / summary.wall_s : NaN;
  return summary;
}

/** Cell `index` of the ensemble drawn with `o.seed`, replayed alone on this thread (`trajectory`). */
export { computeCell as replayCell } from "./run-steps";
