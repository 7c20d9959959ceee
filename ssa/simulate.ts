/**
 * `simulate` on the calling thread, without a clock: the mean-field run (method "ode") or an
 * ensemble (method "ssa" / "tau"), as the JSON of CONTRACT.md §2 with wall_s = 0. The command
 * line and the worker use ssa/node/run-engine.ts, which adds threads and timing. Pure: no I/O.
 */
import { scheduleReport } from "./schedule";
import { simulateEnsemble } from "./ensemble";
import type { Model } from "./model-core";
import { solveOde } from "./ode";
import { chooseBurnIn } from "./burn-in";
import { ensembleOptionsOf, type EngineOptions } from "./engine-options";
import { analyzeOrNull, checkAgainstMeanField, judgeTrace } from "./oscillation-checks";
import { BURN_IN_RELAXATION_TIMES, pathDriftWarnings, type BurnInChoice } from "./stationarity";
import { cellPeriods, guardPeriodsByGrid, periodSummary, sparseMoments, type SimulateSummary, type SpeciesMoments } from "./stats";

function momentsOf(values: number[]): SpeciesMoments {
  const v = Float64Array.from(values);
  const m = sparseMoments([{ values: v, counts: new Float64Array(v.length).fill(1) }]);
  const sd = Math.sqrt(m.variance);
  return { mean: m.mean, variance: m.variance, cv: m.mean !== 0 ? sd / m.mean : NaN, fano: m.mean !== 0 ? m.variance / m.mean : NaN };
}

/**
 * The deterministic run: runs 1, sd 0, quantiles equal to the path, `trace` the path itself;
 * `stationary` pools the path's grid values after burn-in; periods come from the same crossing
 * rule as for cells, and are reported only for a sustained cycle on a grid that resolves it
 * (ssa/oscillation-checks.ts: `damped-oscillation`, `grid-too-coarse`).
 */
export function odeSummary(model: Model, o: EngineOptions, wallS = 0, choice: BurnInChoice = chooseBurnIn(model, o)): SimulateSummary {
  const units = o.units ?? "model";
  const sol = solveOde(model, { tEnd: o.tEnd, dt: o.dt, units });
  const times = Float64Array.from(sol.times);
  const burnIn = choice.burnIn;
  let gStart = 0;
  while (gStart < times.length - 1 && times[gStart] < burnIn) gStart++;
  const scratch = new Float64Array(times.length);
  const sd: Record<string, number[]> = {};
  const quantiles: SimulateSummary["quantiles"] = {};
  const final: Record<string, SpeciesMoments> = {};
  const stationary: Record<string, SpeciesMoments> = {};
  const period: SimulateSummary["period"] = {};
  const raw: Record<string, { periods: number[]; amps: number[] }> = {};
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
    period[id] = periodSummary(Float64Array.from(periods), Float64Array.from(amps), periods.length ? 1 : 0, 1, periods.length >= 3);
    raw[id] = { periods, amps };
  }
  const an = analyzeOrNull(model);
  const warnings = judgeTrace(period, raw, an);
  warnings.push(...guardPeriodsByGrid(period, times));
  const summary: SimulateSummary = {
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
    burn_in_rule: { source: choice.source, relaxation_time: choice.relaxationTime, relaxation_times: BURN_IN_RELAXATION_TIMES },
    // A path that settles to a stable state is checked for drift; a limit cycle's half-window
    // means differ by the part of a cycle each half cuts off, which is no drift.
    warnings: [...warnings, ...choice.warnings, ...(choice.relaxationTime !== null ? pathDriftWarnings(model.species, sol.trace, gStart, burnIn, model.timeUnit) : [])],
    time_unit: model.timeUnit,
    amount_unit: units === "model" ? model.amountUnit : "molecules",
    omega: model.omega,
    trace: sol.trace,
  };
  if (model.schedule) {
    const report = scheduleReport(model, { tEnd: o.tEnd, burnIn, cells: 1 }, sol.firings);
    summary.schedule = report.fired;
    summary.warnings.push(...report.warnings);
  }
  checkAgainstMeanField(model, summary, { tEnd: o.tEnd, dt: o.dt, burnIn }, an);
  return summary;
}

/**
 * One `simulate` run of a compiled model on this thread.
 * @throws RangeError for bad options (a stochastic run needs a seed); OdeError when the mean field fails.
 */
export function simulate(model: Model, o: EngineOptions): SimulateSummary {
  if (o.method === "ode") return odeSummary(model, o);
  ensembleOptionsOf(o); // a stochastic run needs a seed
  const choice = chooseBurnIn(model, o);
  const summary = simulateEnsemble(model, ensembleOptionsOf(o, choice.burnIn), o.runs ?? 1, { units: o.units, burnIn: choice });
  checkAgainstMeanField(model, summary, { tEnd: o.tEnd, dt: o.dt, burnIn: choice.burnIn });
  return summary;
}
