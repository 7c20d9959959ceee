// Worker-thread task of the background worker (piscina): simulates one chunk of cells of a run
// and returns its exact partial statistics. The compiled model is cached per thread.
import { simulateCells, type EnsembleOptions } from "../../ssa/ensemble";
import type { Expr } from "../../ssa/expr-ast";
import { compileParsedModel, type Model } from "../../ssa/model-core";
import type { Partial } from "../../ssa/stats";
import type { Circuit } from "../../ssa/types";

export interface ChunkTask {
  circuit: Circuit;
  overrides?: Record<string, number>;
  /** Formulas parsed on the main thread (ssa/model.ts parseCircuitExpressions). */
  expressions: (Expr | null)[];
  options: EnsembleOptions;
  first: number;
  last: number;
}

/** A chunk's partial, or the reason it cannot be computed (error classes do not survive the thread boundary). */
export type ChunkResult = { partial: Partial } | { inputError: string };

let cached: { key: string; model: Model } | null = null;

export default function simulateChunk(task: ChunkTask): ChunkResult {
  try {
    const key = JSON.stringify([task.circuit, task.overrides ?? null]);
    if (!cached || cached.key !== key) cached = { key, model: compileParsedModel(task.circuit, task.overrides, task.expressions) };
    return { partial: simulateCells(cached.model, task.options, task.first, task.last) };
  } catch (e) {
    // Bad input or a runaway cell: retrying cannot help, so the run fails with this reason.
    if (e instanceof RangeError || e instanceof TypeError) return { inputError: e.message };
    throw e;
  }
}
