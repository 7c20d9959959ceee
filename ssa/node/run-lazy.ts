/**
 * One `simulate` run as CONTRACT.md §2 describes it: ode through the mean-field solver, ssa/tau
 * through the thread pool, timed on this process's clock. Nothing here loads the formula parser
 * (mathjs) unless the circuit has formulas, which keeps the command line quick to start; ssa/node/run.ts
 * re-exports it with a synchronous runTrajectory for the app. Node only (the clock and the pool).
 */
import { performance } from "node:perf_hooks";

import { makeGrid, summarize, trajectory, type EnsembleOptions, type TrajectoryResult } from "../ensemble";
import type { Model } from "../model-core";
import type { SimulateSummary } from "../stats";
import type { Circuit } from "../types";
import { compileModelLazily, simulateCellsPooled, type PoolRunOptions } from "./pool";

export interface RunOptions {
  method: "ode" | "ssa" | "tau";
  tEnd: number;
  dt: number;
  runs?: number;
  /** Required for ssa/tau (the caller draws a random one when the user gives none). */
  seed?: number;
  burnIn?: number;
  overrides?: Record<string, number>;
  units?: "molecules" | "model";
  threads?: number;
  /** ε of the tau-leaping step selection (method "tau"); default ssa/tau.ts TAU_EPSILON. */
  tauEpsilon?: number;
  /** Add the mean-field trace on the same grid and units to an ensemble summary (the API does). */
  includeTrace?: boolean;
}

/**
 * Runs `simulate` for a validated circuit.
 * @throws ModelInputError / RangeError for bad input, OdeError when the mean field cannot be integrated.
 */
export async function runSimulation(circuit: Circuit, o: RunOptions, pool: PoolRunOptions = {}): Promise<SimulateSummary> {
  const t0 = performance.now();
  if (o.method === "ode") {
    const { odeSummary } = await import("../simulate"); // the ODE code, loaded only for ode runs
    const summary = odeSummary(await compileModelLazily(circuit, o.overrides), o); // chooses its burn-in
    summary.wall_s = (performance.now() - t0) / 1000;
    return summary;
  }
  if (o.seed === undefined) throw new RangeError("seed is required for a stochastic run");
  makeGrid(o.tEnd, o.dt); // validates before any thread starts
  const model = await compileModelLazily(circuit, o.overrides);
  // The burn-in is fixed before any cell runs: every thread sums the same window.
  const choice = (await import("../burn-in")).chooseBurnIn(model, o);
  const options: EnsembleOptions = { method: o.method, tEnd: o.tEnd, dt: o.dt, seed: o.seed, burnIn: choice.burnIn, tauEpsilon: o.tauEpsilon };
  const runs = o.runs ?? 1;
  const partial = await simulateCellsPooled(circuit, o.overrides, options, runs, { threads: o.threads, ...pool });
  const summary = summarize(model, options, partial, { units: o.units ?? "molecules", wallS: 0, burnIn: choice });
  // The grid guard and the quasi-cycle caveat need the mean field (ODE code, loaded here only).
  (await import("../oscillation-checks")).checkAgainstMeanField(model, summary, { tEnd: o.tEnd, dt: o.dt, burnIn: choice.burnIn });
  // wall_s covers the intervals and the checks too (their cost is part of a run).
  summary.wall_s = (performance.now() - t0) / 1000;
  summary.events_per_s = summary.wall_s > 0 ? summary.events / summary.wall_s : NaN;
  if (o.includeTrace) summary.trace = (await import("../ode")).solveOde(model, { tEnd: o.tEnd, dt: o.dt, units: o.units ?? "molecules" }).trace;
  return summary;
}

/** runTrajectory that loads the formula parser only when the circuit has formulas (the command line). */
export async function runTrajectoryLazily(circuit: Circuit, o: RunOptions & { seed: number; index: number }): Promise<TrajectoryResult> {
  if (o.method === "ode") throw new RangeError(`method must be "ssa" or "tau" for a trajectory`);
  return trajectoryOf(await compileModelLazily(circuit, o.overrides), o);
}

/** The trajectory of cell `o.index` for a compiled model. @throws RangeError for method "ode" or a bad index. */
export function trajectoryOf(model: Model, o: RunOptions & { seed: number; index: number }): TrajectoryResult {
  if (o.method === "ode") throw new RangeError(`method must be "ssa" or "tau" for a trajectory`);
  return trajectory(model, { method: o.method, tEnd: o.tEnd, dt: o.dt, seed: o.seed, burnIn: o.burnIn, tauEpsilon: o.tauEpsilon }, o.index, o.units ?? "molecules");
}
