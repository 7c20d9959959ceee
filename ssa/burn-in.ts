/**
 * The default burn-in (issue 12, item 5) comes from the circuit's own relaxation time, and a
 * window too short for it is said out loud (the drift check is in ssa/stationarity.ts). Pure: no I/O.
 *
 * Burn-in rule. τ = 1 / min |Re λ| over the decaying modes of the mean field's reduced Jacobian at
 * its steady state (ssa/analyze.ts): the slowest mode forgets the initial offset as e^(−t/τ), so
 * after 5τ less than e^−5 ≈ 0.7% of it is left (5 time constants for < 1%: common practice). The
 * default burn-in is max(t_end / 5, 5τ), so circuits that relax quickly keep the old default and
 * their numbers; it is capped at t_end / 2 so half the run is always measured, and when the cap
 * bites (5τ > t_end / 2) the result carries `window-too-short` naming `t_end`. Without a stable
 * steady state (an oscillator, unbounded growth) τ is undefined and the default stays t_end / 5.
 * A burn-in the user gives is used as given; the drift check still applies to it.
 */
import { findSteadyState, classify, type AnalyzeModel } from "./analyze";
import { eigenvalues } from "./linalg";
import { meanFieldJacobian, reducedJacobian, switchingCondition } from "./lna";
import { BURN_IN_RELAXATION_TIMES, MAX_DEFAULT_BURN_IN_SHARE, round, type BurnInChoice } from "./stationarity";
import { makeWarning } from "./warnings";

/**
 * Slowest relaxation time 1/min|Re λ| of the decaying modes at the mean field's steady state, or
 * null when there is no stable steady state (the numbers then relax to no single state).
 */
export function computeRelaxationTime(model: AnalyzeModel): number | null {
  let ss;
  try {
    ss = findSteadyState(model);
  } catch {
    return null; // no steady state (growth without bound, the solver gave up, rates reading time): no τ to offer
  }
  if (switchingCondition(model, ss.y)) return null; // on a piecewise switch no Jacobian describes the relaxation
  const reduced = eigenvalues(reducedJacobian(meanFieldJacobian(model, ss.y), model.nSpecies, ss.conservation), ss.conservation.independent.length);
  if (reduced.length === 0 || !classify(reduced).stable) return null;
  let slowest = Infinity;
  for (const l of reduced) slowest = Math.min(slowest, -l.re);
  return slowest > 0 && Number.isFinite(slowest) ? 1 / slowest : null;
}

/**
 * The burn-in a run uses: the given one, else the rule in this file's header.
 * `relaxationTime` may be passed when already known (undefined: computed here).
 */
export function chooseBurnIn(model: AnalyzeModel & { timeUnit: string }, o: { tEnd: number; burnIn?: number }, relaxationTime?: number | null): BurnInChoice {
  const tau = relaxationTime === undefined ? computeRelaxationTime(model) : relaxationTime;
  const unit = model.timeUnit;
  if (o.burnIn !== undefined) return { burnIn: o.burnIn, source: "given", relaxationTime: tau, warnings: [] };
  const floor = o.tEnd / 5;
  if (tau === null || BURN_IN_RELAXATION_TIMES * tau <= floor) return { burnIn: floor, source: "t_end/5", relaxationTime: tau, warnings: [] };
  const wanted = BURN_IN_RELAXATION_TIMES * tau;
  const cap = MAX_DEFAULT_BURN_IN_SHARE * o.tEnd;
  if (wanted <= cap) return { burnIn: wanted, source: "relaxation", relaxationTime: tau, warnings: [] };
  return {
    burnIn: cap,
    source: "relaxation",
    relaxationTime: tau,
    warnings: [makeWarning(
      "window-too-short",
      `t_end: the circuit relaxes with a time constant of ${round(tau)} ${unit}, so ${BURN_IN_RELAXATION_TIMES} of them (${round(wanted)} ${unit}) should pass before stationary statistics start, but t_end = ${o.tEnd} ${unit} leaves no window after that; burn-in was capped at ${round(cap)} ${unit} and the stationary numbers still carry the start. Use t_end ≥ ${round(wanted / MAX_DEFAULT_BURN_IN_SHARE)} ${unit}, or set burn_in yourself.`,
      "t_end",
    )],
  };
}

