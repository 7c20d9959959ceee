/**
 * The engine's one options type for a run: what the command line, the worker and the API hand
 * the engine (ssa/node/run-engine.ts), whatever shape their input had. lib/schemas/run-options.ts
 * parses every input into one schema and maps it here in one function (toEngineOptions); ssa/
 * may not import lib/, so this type is the engine's side of that mapping. Pure.
 */
import type { EnsembleOptions } from "./ensemble";

export interface EngineOptions {
  method: "ode" | "ssa" | "tau";
  /** End time and grid step, in the model's time unit: the grid is 0, dt, 2dt, … ≤ tEnd. */
  tEnd: number;
  dt: number;
  /** Cells of an ensemble (default 1; a trace has one path). */
  runs?: number;
  /** Required for ssa/tau: cell i draws from (seed, i) alone. */
  seed?: number;
  /** Time before which stationary statistics and periods ignore samples; absent: chosen from the circuit (ssa/burn-in.ts). */
  burnIn?: number;
  /** Parameter values of this run only. */
  overrides?: Record<string, number>;
  /** Output amounts; default "molecules" for ssa/tau, "model" for ode. */
  units?: "molecules" | "model";
  /** ε of the tau-leaping step selection (method "tau"); default ssa/types.ts TAU_EPSILON. */
  tauEpsilon?: number;
  /** Events one cell may fire before the run fails as a runaway; default ssa/ensemble.ts's. */
  maxEventsPerCell?: number;
  // Options still to come (schedules of inputs, growth and division, extrinsic noise) join here,
  // as optional fields read by the engine, and in lib/schemas/run-options.ts (RUN_OPTION_FIELDS
  // and toEngineOptions): nowhere else.
}

/** Output units of a run: as given, else the method's default. */
export const unitsOf = (o: Pick<EngineOptions, "method" | "units">): "molecules" | "model" => o.units ?? (o.method === "ode" ? "model" : "molecules");

/**
 * The per-call options of the cell kernels (simulateCells, trajectory, summarize) for a
 * stochastic run, with the burn-in the run uses (ssa/burn-in.ts chooseBurnIn; a replayed cell
 * does not depend on it).
 * @throws RangeError for method "ode" or a missing seed.
 */
export function ensembleOptionsOf(o: EngineOptions, burnIn: number | undefined = o.burnIn): EnsembleOptions {
  if (o.method !== "ssa" && o.method !== "tau") throw new RangeError(`method must be "ssa" or "tau" for an ensemble, got ${String(o.method)}`);
  if (o.seed === undefined) throw new RangeError("seed is required for a stochastic run");
  return {
    method: o.method, tEnd: o.tEnd, dt: o.dt, seed: o.seed,
    ...(burnIn !== undefined ? { burnIn } : {}),
    ...(o.tauEpsilon !== undefined ? { tauEpsilon: o.tauEpsilon } : {}),
    ...(o.maxEventsPerCell !== undefined ? { maxEventsPerCell: o.maxEventsPerCell } : {}),
  };
}
