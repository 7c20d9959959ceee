/**
 * One `simulate` run as CONTRACT.md §2 describes it, for the command line and the background
 * worker: ode through the mean-field solver, ssa/tau through the thread pool, timed on this
 * process's clock. Node only (the clock and the pool).
 */
import { performance } from "node:perf_hooks";

import { burnInOf, makeGrid, summarize, trajectory, type EnsembleOptions, type TrajectoryResult } from "../ensemble";
import { solveOde } from "../ode";
import { cellPeriods, periodSummary, sparseMoments, type SimulateSummary, type SpeciesMoments } from "../stats";
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
  /** Add the mean-field trace on the same grid and units to an ensemble summary (the API does). */
  includeTrace?: boolean;
}

function momentsOf(values: number[]): SpeciesMoments {
  const v = Float64Array.from(values);
  const m = sparseMoments([{ values: v, counts: new Float64Array(v.length).fill(1) }]);
  const sd = Math.sqrt(m.variance);
  return { mean: m.mean, variance: m.variance, cv: m.mean !== 0 ? sd / m.mean : NaN, fano: m.mean !== 0 ? m.variance / m.mean : NaN };
}

/**
 * The deterministic run: runs 1, sd 0, quantiles equal to the path, `trace` the path itself;
 * `stationary` pools the path's grid values after burn-in; periods come from the same crossing
 * rule as for cells.
 */
async function odeSummary(circuit: Circuit, o: RunOptions, t0: number): Promise<SimulateSummary> {
  const model = await compileModelLazily(circuit, o.overrides);
  const units = o.units ?? "model";
  const sol = solveOde(model, { tEnd: o.tEnd, dt: o.dt, units });
  const times = Float64Array.from(sol.times);
  const burnIn = burnInOf(o);
  let gStart = 0;
  while (gStart < times.length - 1 && times[gStart] < burnIn) gStart++;
  const scratch = new Float64Array(times.length);
  const sd: Record<string, number[]> = {};
  const quantiles: SimulateSummary["quantiles"] = {};
  const final: Record<string, SpeciesMoments> = {};
  const stationary: Record<string, SpeciesMoments> = {};
  const period: SimulateSummary["period"] = {};
  for (const id of model.species) {
    const path = sol.trace[id];
    sd[id] = path.map(() => 0);
    quantiles[id] = { p05: path.slice(), p25: path.slice(), p50: path.slice(), p75: path.slice(), p95: path.slice() };
    const last = path[path.length - 1];
    final[id] = { mean: last, variance: 0, cv: 0, fano: 0 };
    stationary[id] = momentsOf(path.slice(gStart));
    const y = Float64Array.from(path);
    let lo = Infinity;
    let hi = -Infinity;
    for (const v of path) {
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
    const periods: number[] = [];
    const amps: number[] = [];
    // A band of 1e-6 of the path's range: a deterministic path has no noise to guard against.
    cellPeriods(y, 0, 1, times, gStart, times.length, 1e-6 * Math.max(hi - lo, 1e-300), scratch, periods, amps);
    period[id] = periodSummary(Float64Array.from(periods), Float64Array.from(amps), periods.length ? 1 : 0, 1);
  }
  const wallS = (performance.now() - t0) / 1000;
  return {
    method: "ode",
    seed: null,
    runs: 1,
    units,
    species: model.species,
    times: sol.times,
    mean: sol.trace,
    sd,
    quantiles,
    final,
    stationary,
    period,
    events: 0,
    wall_s: wallS,
    events_per_s: 0,
    burn_in: burnIn,
    time_unit: model.timeUnit,
    amount_unit: units === "model" ? model.amountUnit : "molecules",
    omega: model.omega,
    trace: sol.trace,
  };
}

/**
 * Runs `simulate` for a validated circuit.
 * @throws ModelInputError / RangeError for bad input, OdeError when the mean field cannot be integrated.
 */
export async function runSimulation(circuit: Circuit, o: RunOptions, pool: PoolRunOptions = {}): Promise<SimulateSummary> {
  const t0 = performance.now();
  if (o.method === "ode") return odeSummary(circuit, o, t0);
  if (o.seed === undefined) throw new RangeError("seed is required for a stochastic run");
  const options: EnsembleOptions = { method: o.method, tEnd: o.tEnd, dt: o.dt, seed: o.seed, burnIn: o.burnIn };
  makeGrid(o.tEnd, o.dt); // validates before any thread starts
  const runs = o.runs ?? 1;
  const partial = await simulateCellsPooled(circuit, o.overrides, options, runs, { threads: o.threads, ...pool });
  const model = await compileModelLazily(circuit, o.overrides);
  const wallS = (performance.now() - t0) / 1000;
  const summary = summarize(model, options, partial, { units: o.units ?? "molecules", wallS });
  if (o.includeTrace) summary.trace = solveOde(model, { tEnd: o.tEnd, dt: o.dt, units: o.units ?? "molecules" }).trace;
  return summary;
}

/** `trajectory`: cell `index` of the ensemble drawn with `seed`, alone. */
export async function runTrajectory(circuit: Circuit, o: RunOptions & { seed: number; index: number }): Promise<TrajectoryResult> {
  if (o.method === "ode") throw new RangeError(`method must be "ssa" or "tau" for a trajectory`);
  const model = await compileModelLazily(circuit, o.overrides);
  return trajectory(model, { method: o.method, tEnd: o.tEnd, dt: o.dt, seed: o.seed, burnIn: o.burnIn }, o.index, o.units ?? "molecules");
}
