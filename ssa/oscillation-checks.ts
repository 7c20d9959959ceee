/**
 * Checks of a `simulate` result against the mean field (issue 12 items 3 and 4): the grid guard
 * from the model's own rhythm (a grid can alias a rhythm into a slower one that looks well
 * sampled, e.g. the ring timer's 20.9 min cycle sampled every 19 min reads as 206 min, so the data
 * alone cannot tell), sustained vs damped cycles of the mean-field trace, and noise-driven
 * quasi-cycles around a stable steady state. Loads the ODE code and analyze, so thread-pool
 * workers never import it. Pure: no I/O.
 */
import { analyze, type AnalyzeResult } from "./analyze";
import type { Model } from "./model";
import { solveOde } from "./ode";
import { complexModes, DAMPED_DROP, fitAmplitudeTrend, MIN_SAMPLES_PER_PERIOD, quasiCycleWarning } from "./oscillation";
import { cellPeriods, gridWarning, withheldPeriod, type PeriodSummary, type SimulateSummary } from "./stats";
import { makeWarning, type EngineWarning } from "./warnings";

export { quasiCycleWarning };

/** Most grid points of the fine mean-field solve that measures the limit cycle's period. */
const FINE_POINTS = 200_000;

const fmt = (v: number) => Number(v.toPrecision(3)).toString();

/** analyze, or null when it has no answer (no steady state, or the mean field fails): the checks are then skipped. */
export function analyzeOrNull(model: Model): AnalyzeResult | null {
  try {
    return analyze(model);
  } catch {
    return null;
  }
}

/**
 * The period the grid must resolve: the mean-field limit cycle's (a fine solve) when the steady
 * state is past a Hopf point, else the fastest ringing mode's 2π/|Im λ| (complex pairs with
 * |Re λ| < |Im λ|, i.e. underdamped); null when the model has no rhythm of its own.
 */
export function modelRhythm(model: Model, an: AnalyzeResult, tEnd: number, burnIn: number): { period: number; source: string } | null {
  const modes = complexModes(an);
  if (an.oscillatory && modes[0]) {
    // 200 linear periods settle any cycle we ship (the ring timer's within 10); a longer run only costs time.
    const horizon = Math.min(tEnd, (200 * 2 * Math.PI) / modes[0].im);
    const fine = Math.max(Math.min((2 * Math.PI) / modes[0].im / 32, horizon / 100), horizon / FINE_POINTS);
    try {
      const sol = solveOde(model, { tEnd: horizon, dt: fine });
      const times = Float64Array.from(sol.times);
      let g0 = 0;
      while (g0 < times.length - 1 && times[g0] < Math.min(burnIn, horizon / 2)) g0++;
      let best = Infinity;
      for (const id of model.species) {
        const y = Float64Array.from(sol.trace[id]);
        let lo = Infinity;
        let hi = -Infinity;
        for (let g = g0; g < y.length; g++) {
          lo = Math.min(lo, y[g]);
          hi = Math.max(hi, y[g]);
        }
        const periods: number[] = [];
        cellPeriods(y, 0, 1, times, g0, times.length, 1e-6 * Math.max(hi - lo, 1e-300), new Float64Array(times.length), periods, []);
        if (periods.length >= 3) best = Math.min(best, periods.reduce((a, b) => a + b, 0) / periods.length);
      }
      if (best < Infinity) return { period: best, source: "the mean-field limit cycle" };
    } catch {
      // fall through to the linear estimate
    }
    return { period: (2 * Math.PI) / modes[0].im, source: "the mean field's unstable oscillatory mode" };
  }
  const ringing = modes.filter((l) => Math.abs(l.re) < l.im);
  if (ringing.length === 0) return null;
  const fastest = ringing.reduce((a, b) => (b.im > a.im ? b : a));
  return { period: (2 * Math.PI) / fastest.im, source: "the mean field's oscillatory mode" };
}

/**
 * Applies the mean-field checks to a finished summary (mutating it): the model-based grid guard
 * (withholds every period and warns `grid-too-coarse` when dt > rhythm/MIN_SAMPLES_PER_PERIOD) and,
 * for an ensemble, the `quasi-cycles` warning when the steady state is stable but a species
 * oscillates. `an` may be passed when already computed.
 */
export function checkAgainstMeanField(model: Model, summary: SimulateSummary, o: { tEnd: number; dt: number; burnIn: number }, an: AnalyzeResult | null = analyzeOrNull(model)): void {
  if (!an) return;
  const rhythm = modelRhythm(model, an, o.tEnd, o.burnIn);
  if (rhythm && o.dt > rhythm.period / MIN_SAMPLES_PER_PERIOD) {
    for (const id of Object.keys(summary.period)) {
      const p = summary.period[id];
      if (p.count > 0 || p.acf?.significant) summary.period[id] = withheldPeriod(p, "grid-too-coarse");
    }
    summary.warnings = summary.warnings.filter((w) => w.code !== "grid-too-coarse");
    summary.warnings.push(gridWarning(o.dt, rhythm.period, rhythm.source));
  }
  if (summary.method !== "ode" && Object.values(summary.period).some((p) => p.oscillating)) {
    const w = quasiCycleWarning(an, "period");
    if (w) summary.warnings.push(w);
  }
}

/**
 * Sustained vs damped for the mean-field trace (issue 12 item 4): a species' periods are reported
 * only when the cycle amplitude does not fall by more than DAMPED_DROP over the last half of its
 * cycles, or the steady state is past a Hopf point (then a decaying amplitude is the approach to
 * the limit cycle). A damped trace reports count 0 and one `damped-oscillation` warning naming the
 * damping time fitted to successive amplitudes (and −1/Re λ from analyze). Mutates `period`.
 */
export function judgeTrace(period: Record<string, PeriodSummary>, raw: Record<string, { periods: number[]; amps: number[] }>, an: AnalyzeResult | null): EngineWarning[] {
  const damped: { id: string; tau: number }[] = [];
  for (const [id, { periods, amps }] of Object.entries(raw)) {
    const p = period[id];
    const trend = fitAmplitudeTrend(periods, amps);
    const sustained = trend.ratio >= 1 - DAMPED_DROP || an?.oscillatory === true;
    p.trend = { damping_time: Number.isFinite(trend.dampingTime) ? trend.dampingTime : null, ratio: trend.ratio, cycles: trend.cycles, sustained };
    if (periods.length >= 3 && !sustained) {
      damped.push({ id, tau: trend.dampingTime });
      period[id] = withheldPeriod(p, "damped-oscillation");
    }
  }
  if (damped.length === 0) return [];
  const tau = Math.min(...damped.map((d) => d.tau));
  const mode = an ? complexModes(an)[0] : undefined;
  const lin = mode && mode.re < 0 ? ` (−1/Re λ at the steady state: ${fmt(-1 / mode.re)})` : "";
  return [
    makeWarning(
      "damped-oscillation",
      `The mean-field trace of ${damped.map((d) => d.id).join(", ")} rings but decays towards a steady state (amplitude e-folding time about ${fmt(tau)} from successive cycles${lin}): damped ringing is not a sustained oscillation, so no period is reported.`,
      "period",
    ),
  ];
}
