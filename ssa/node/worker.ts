/**
 * Worker-thread entry of the simulation pool (piscina): compiles the circuit once per thread, then
 * claims chunks of cells from a shared counter until none are left, and returns the exact partial
 * statistics of every chunk it ran, merged. Node only. Imports nothing that loads the formula
 * parser, so a thread starts in a fraction of a second.
 */
import { simulateCells, type EnsembleOptions } from "../ensemble";
import type { Expr } from "../expr-ast";
import { compileParsedModel, type Model } from "../model-core";
import { mergePartials, type Partial } from "../stats";
import type { Circuit } from "../types";

/** Shared slots of the claim array (Int32Array over a SharedArrayBuffer). */
export const SLOT_NEXT = 0;
export const SLOT_CANCEL = 1;
export const SLOT_DONE_CELLS = 2;

export interface CellsTask {
  circuit: Circuit;
  overrides?: Record<string, number>;
  /** Formulas parsed by the main thread (ssa/model.ts parseCircuitExpressions): workers never load the parser. */
  expressions: (Expr | null)[];
  options: EnsembleOptions;
  /** Chunks [first, last) of the run; chunk k is claimed by Atomics.add(shared, SLOT_NEXT, 1) === k. */
  ranges: [number, number][];
  shared: Int32Array;
}

// One compiled model (and its generated kernel) per thread, keyed by circuit and overrides.
let cached: { key: string; model: Model } | null = null;

function modelFor(task: CellsTask): Model {
  const key = JSON.stringify([task.circuit, task.overrides ?? null]);
  if (!cached || cached.key !== key) cached = { key, model: compileParsedModel(task.circuit, task.overrides, task.expressions) };
  return cached.model;
}

/**
 * Claims one chunk and simulates it: its partial, or null when every chunk is taken or the run
 * is cancelled.
 */
export function runOneChunk(model: Model, task: Pick<CellsTask, "options" | "ranges" | "shared">): Partial | null {
  if (Atomics.load(task.shared, SLOT_CANCEL) !== 0) return null;
  const range = task.ranges[Atomics.add(task.shared, SLOT_NEXT, 1)];
  if (!range) return null;
  const p = simulateCells(model, task.options, range[0], range[1]);
  Atomics.add(task.shared, SLOT_DONE_CELLS, range[1] - range[0]);
  return p;
}

/** Claims and simulates chunks until none are left; their merged partial, or null when it got none. */
export function runClaimedChunks(model: Model, task: Pick<CellsTask, "options" | "ranges" | "shared">): Partial | null {
  let acc: Partial | null = null;
  for (let p = runOneChunk(model, task); p; p = runOneChunk(model, task)) acc = acc ? mergePartials(acc, p) : p;
  return acc;
}

/** Piscina task: the chunks this thread manages to claim. */
export default function simulateTask(task: CellsTask): Partial | null {
  return runClaimedChunks(modelFor(task), task);
}
