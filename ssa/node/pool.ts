/**
 * Ensembles over threads: the calling thread and K − 1 worker threads (piscina) claim chunks of
 * cells from one shared counter, each folds its chunks into an exact Partial, and the partials
 * merge in whatever order they finish. Which thread ran which cells never shows in the result:
 * the merged statistics are the same bits as one thread (ssa/stats.ts). Node only.
 */
import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";

import { Piscina } from "piscina";

import { chunkRanges, type EnsembleOptions } from "../ensemble";
import type { Expr } from "../expr-ast";
import { compileParsedModel, type Model } from "../model-core";
import { mergePartials, type Partial } from "../stats";
import type { Circuit } from "../types";
import { runOneChunk, SLOT_CANCEL, SLOT_DONE_CELLS, type CellsTask } from "./worker";

/** Default thread count: all cores (CONTRACT.md `--threads`). */
export const defaultThreads = (): number => Math.max(1, availableParallelism());

/** Worker threads must load TypeScript the way the main thread does (through tsx). */
function workerExecArgv(): string[] {
  const argv = process.execArgv.slice();
  const hasTsx =
    argv.some((a, i) => (a === "--import" || a === "--loader" || a === "--require") && /tsx/.test(argv[i + 1] ?? "")) ||
    argv.some((a) => /^--(import|loader|require)=.*tsx/.test(a));
  if (!hasTsx) argv.push("--import", "tsx");
  return argv;
}

export interface PoolRunOptions {
  /** Threads in all, the calling one included (default: all cores). */
  threads?: number;
  /** Cells per chunk; default about eight chunks per thread, between 1 and 250 cells. */
  chunk?: number;
  /**
   * Whether the calling thread simulates too (default true: K threads = caller + K − 1 workers).
   * A server keeps it false so its event loop stays free; then K workers run.
   */
  useCallingThread?: boolean;
  /** Filled in after the run: cells simulated by worker threads (the rest ran on the caller). */
  report?: { workerCells: number; workers: number };
  /** Called now and then with the fraction of cells done. */
  onProgress?: (fraction: number) => void;
  signal?: AbortSignal;
}

export class CancelledError extends Error {
  constructor() {
    super("the run was cancelled");
    this.name = "CancelledError";
  }
}

/**
 * Parsed formulas of a circuit (null for other laws), loading the parser (mathjs, about a second)
 * only when there is a formula.
 * @throws ModelInputError naming the field of a bad formula.
 */
export async function parseExpressionsLazily(circuit: Circuit, overrides?: Record<string, number>): Promise<(Expr | null)[]> {
  if (!circuit.reactions.some((r) => r.rate.law === "expression")) return circuit.reactions.map(() => null);
  return (await import("../model")).parseCircuitExpressions(circuit, overrides);
}

/** compileModel without loading the parser for circuits that have no formulas. */
export async function compileModelLazily(circuit: Circuit, overrides?: Record<string, number>): Promise<Model> {
  return compileParsedModel(circuit, overrides, await parseExpressionsLazily(circuit, overrides));
}

const nextTick = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * Runs cells [0, runs) of a circuit's ensemble and returns the merged partial.
 * @throws ModelInputError / RangeError for bad input; CancelledError when `signal` aborts.
 */
export async function simulateCellsPooled(
  circuit: Circuit,
  overrides: Record<string, number> | undefined,
  options: EnsembleOptions,
  runs: number,
  o: PoolRunOptions = {},
): Promise<Partial> {
  const threads = Math.max(1, Math.min(o.threads ?? defaultThreads(), runs));
  const chunk = o.chunk ?? Math.max(1, Math.min(250, Math.ceil(runs / (threads * 8))));
  const ranges = chunkRanges(runs, chunk);
  const expressions = await parseExpressionsLazily(circuit, overrides);
  const model = compileParsedModel(circuit, overrides, expressions); // bad input fails here, before any thread starts
  const shared = new Int32Array(new SharedArrayBuffer(3 * Int32Array.BYTES_PER_ELEMENT));
  const onAbort = () => Atomics.store(shared, SLOT_CANCEL, 1);
  o.signal?.addEventListener("abort", onAbort, { once: true });
  const report = () => o.onProgress?.(Atomics.load(shared, SLOT_DONE_CELLS) / runs);

  const useCaller = o.useCallingThread ?? true;
  const workers = useCaller ? (ranges.length > 1 ? threads - 1 : 0) : threads;
  let pool: Piscina<CellsTask, Partial | null> | null = null;
  const workerResults: Promise<Partial | null>[] = [];
  try {
    if (workers > 0) {
      pool = new Piscina<CellsTask, Partial | null>({
        filename: fileURLToPath(new URL("./worker.ts", import.meta.url)),
        minThreads: workers,
        maxThreads: workers,
        idleTimeout: 1000,
        execArgv: workerExecArgv(),
      });
      for (let w = 0; w < workers; w++) {
        workerResults.push(pool.run({ circuit, overrides, expressions, options, ranges, shared }));
      }
    }
    // The calling thread claims chunks one at a time, yielding between them so that the pool's
    // messages (workers starting, results arriving) are handled while it works.
    let acc: Partial | null = null;
    let callerCells = 0;
    while (useCaller) {
      await nextTick();
      const p = runOneChunk(model, { options, ranges, shared });
      if (!p) break;
      acc = acc ? mergePartials(acc, p) : p;
      callerCells += p.cells;
      report();
    }
    for (const r of await Promise.all(workerResults)) if (r) acc = acc ? mergePartials(acc, r) : r;
    report();
    if (Atomics.load(shared, SLOT_CANCEL) !== 0) throw new CancelledError();
    if (!acc || acc.cells !== runs) throw new Error(`internal: merged ${acc?.cells ?? 0} of ${runs} cells`);
    if (o.report) {
      o.report.workerCells = runs - callerCells;
      o.report.workers = workers;
    }
    return acc;
  } finally {
    o.signal?.removeEventListener("abort", onAbort);
    if (pool) await pool.destroy();
  }
}

