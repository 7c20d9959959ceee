/**
 * `analyze`: deterministic steady state (damped Newton started from a late ODE state), Jacobian
 * eigenvalues there, stable vs oscillatory (a complex pair in the right half-plane: a Hopf
 * bifurcation has been crossed), and the LNA covariance at a stable steady state
 * (CONTRACT.md §2 "analyze output"). Pure: no I/O.
 */
import { eigenvalues, luFactor, luSolve, type Complex, type Conservation } from "./linalg";
import { linearNoise, meanFieldJacobian, modelConservation, reducedJacobian, switchingCondition, type JacobianModel } from "./lna";
import type { Model } from "./model";
import { integrate, meanFieldRhs, OdeError } from "./ode";
import { quasiCycleWarning } from "./oscillation";
import { ModelInputError } from "./types";
import type { EngineWarning } from "./warnings";

export type AnalyzeModel = JacobianModel & Pick<Model, "species" | "omega" | "initialAmounts">;

export interface AnalyzeOptions {
  /** Units of `steady_state`: "model" (default) or "molecules". LNA results are always molecules. */
  units?: "model" | "molecules";
  /** Length of the first settling chunk of the ODE, in model time (default: from the Jacobian). */
  tSettle?: number;
}

/** The JSON of CONTRACT.md §2 `analyze`. */
export interface AnalyzeResult {
  steady_state: Record<string, number>;
  eigenvalues: Complex[];
  stable: boolean;
  oscillatory: boolean;
  lna: { covariance: number[][]; cv: Record<string, number | null>; fano: Record<string, number | null> } | null;
  /** Caveats (ssa/warnings.ts): `quasi-cycles` when the stable steady state is lightly damped (ssa/oscillation.ts). */
  warnings: EngineWarning[];
}

/** No steady state could be found (e.g. a species grows without bound). */
export class SteadyStateError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "SteadyStateError";
  }
}

export interface SteadyState {
  /** Amounts at the steady state, model units. */
  y: Float64Array;
  /** Largest |dy_i/dt| relative to the gross flux through species i at y. */
  residual: number;
  conservation: Conservation;
  /** Model time the ODE ran before Newton converged. */
  settledAfter: number;
}

const NEWTON_MAX_ITER = 100;
const CHUNKS = 14;

/**
 * Deterministic steady state: integrate the mean field in chunks of doubling length (first chunk
 * ≈ 20 × the slowest species' relaxation time 1/|J_ii| at the start, or `tSettle`) and, after each,
 * try damped Newton on the independent species (conserved totals fixed by the initial state) from
 * the chunk's end state, and from its time average once the trajectory keeps moving (a limit
 * cycle circles its unstable steady state, so the average starts Newton close to it).
 * @throws SteadyStateError when no chunk leads Newton to a steady state.
 */
export function findSteadyState(model: AnalyzeModel, options: { tSettle?: number } = {}): SteadyState {
  if (options.tSettle !== undefined) return solveSteadyState(model, options);
  // A run asks twice for the same model (the burn-in rule, then the mean-field checks): the
  // answer depends on the compiled model only, so it is kept with it (callers only read it).
  const known = STEADY_STATES.get(model);
  if (known) {
    if (known instanceof Error) throw known;
    return known;
  }
  try {
    const ss = solveSteadyState(model, options);
    STEADY_STATES.set(model, ss);
    return ss;
  } catch (e) {
    if (e instanceof Error) STEADY_STATES.set(model, e);
    throw e;
  }
}

const STEADY_STATES = new WeakMap<AnalyzeModel, SteadyState | Error>();

function solveSteadyState(model: AnalyzeModel, options: { tSettle?: number }): SteadyState {
  const timed = model.timeReactions?.[0];
  if (timed !== undefined) {
    throw new ModelInputError(`reactions[${timed}].rate.expression: depends on time t; a steady state, its stability and the LNA need rates that depend on the state only`);
  }
  const nS = model.nSpecies;
  const cons = modelConservation(model);
  const rhs = meanFieldRhs(model);
  let y = Float64Array.from(model.initialAmounts);
  const totals = conservedTotals(cons, y);
  let chunk = options.tSettle ?? settleTime(model, y);
  if (!(chunk > 0 && Number.isFinite(chunk))) throw new RangeError(`tSettle must be > 0, got ${chunk}`);
  let t = 0;
  let lastError = "the ODE never settled";
  for (let k = 0; k < CHUNKS; k++) {
    const samples = 64;
    const grid = new Float64Array(samples + 1);
    for (let j = 0; j <= samples; j++) grid[j] = (chunk * j) / samples;
    let values: Float64Array;
    try {
      values = integrate(rhs, y, grid, { rtol: 1e-8, atol: 1e-12, maxSteps: 200_000 }).values;
    } catch (e) {
      if (e instanceof OdeError) {
        lastError = e.message;
        break;
      }
      throw e;
    }
    t += chunk;
    y = values.slice(samples * nS);
    const starts: Float64Array[] = [y];
    if (k >= 2) {
      const avg = new Float64Array(nS);
      for (let j = 1; j <= samples; j++) for (let i = 0; i < nS; i++) avg[i] += values[j * nS + i] / samples;
      starts.push(avg);
    }
    for (const start of starts) {
      const res = newton(model, cons, totals, start);
      // Early on, only trust Newton as a local refinement of where the ODE already is, so that a
      // trajectory still on its way to a stable state is not pulled onto a saddle in between;
      // after 300 × the relaxation time (chunks 0–3) any steady state near the late orbit counts.
      if (res && (k >= 3 || relativeDistance(start, res.y) <= 0.05)) {
        return { y: res.y, residual: res.residual, conservation: cons, settledAfter: t };
      }
    }
    lastError = "Newton's method did not converge";
    chunk *= 2;
  }
  throw new SteadyStateError(`no steady state found after t = ${t} (${lastError}); a species may grow without bound`);
}

/** max_i |a_i − b_i| / (|b_i| + 1e-6·max|b| + 1e-300). */
function relativeDistance(a: Float64Array, b: Float64Array): number {
  let big = 0;
  for (let i = 0; i < b.length; i++) big = Math.max(big, Math.abs(b[i]));
  let d = 0;
  for (let i = 0; i < b.length; i++) d = Math.max(d, Math.abs(a[i] - b[i]) / (Math.abs(b[i]) + 1e-6 * big + 1e-300));
  return d;
}

/** Conserved totals T = y_D − L0·y_I of the starting state. */
function conservedTotals(cons: Conservation, y: Float64Array): Float64Array {
  const r = cons.independent.length;
  const T = new Float64Array(cons.dependent.length);
  cons.dependent.forEach((sp, d) => {
    let v = y[sp];
    for (let b = 0; b < r; b++) v -= cons.link[d * r + b] * y[cons.independent[b]];
    T[d] = v;
  });
  return T;
}

function fillDependent(cons: Conservation, totals: Float64Array, y: Float64Array): void {
  const r = cons.independent.length;
  cons.dependent.forEach((sp, d) => {
    let v = totals[d];
    for (let b = 0; b < r; b++) v += cons.link[d * r + b] * y[cons.independent[b]];
    y[sp] = v;
  });
}

/** First settling chunk: 20 × the slowest relaxation time 1/|J_ii| over species with J_ii ≠ 0. */
function settleTime(model: AnalyzeModel, y: Float64Array): number {
  const J = meanFieldJacobian(model, y);
  const nS = model.nSpecies;
  let slowest = Infinity;
  for (let i = 0; i < nS; i++) {
    const d = Math.abs(J[i * nS + i]);
    if (d > 0 && Number.isFinite(d)) slowest = Math.min(slowest, d);
  }
  return Number.isFinite(slowest) ? 20 / slowest : 100;
}

interface FluxScratch {
  f: Float64Array;
  dydt: Float64Array;
  gross: Float64Array;
}

/** dy/dt at y and, per species, the gross flux Σ_r |S_ri·f_r| (the scale of "zero" for dy_i/dt). */
function fluxes(model: AnalyzeModel, y: Float64Array, s: FluxScratch): void {
  const nS = model.nSpecies;
  model.rates(y, s.f);
  s.dydt.fill(0);
  s.gross.fill(0);
  for (let r = 0; r < model.nReactions; r++) {
    const fr = s.f[r];
    for (let i = 0; i < nS; i++) {
      const st = model.netStoich[r * nS + i];
      if (st === 0) continue;
      s.dydt[i] += st * fr;
      s.gross[i] += Math.abs(st * fr);
    }
  }
}

function relativeResidual(model: AnalyzeModel, cons: Conservation, s: FluxScratch): number {
  let worst = 0;
  for (const i of cons.independent) {
    const scale = s.gross[i];
    const v = Math.abs(s.dydt[i]);
    if (v === 0) continue;
    worst = Math.max(worst, scale > 0 ? v / scale : Infinity);
  }
  return worst;
}

/**
 * Damped Newton on F(y_I) = (Sᵀf(y))_I with y_D = L0·y_I + T. Steps are cut to stay in y ≥ 0
 * (fraction to the boundary 0.99) and halved until ‖F‖₂ decreases (Armijo, c = 1e-4).
 * Converged when every |dy_i/dt| ≤ 1e-14 × its gross flux, or when no step decreases ‖F‖ any
 * more (round-off) with that ratio already ≤ 1e-9. Returns null when it does not converge.
 */
function newton(model: AnalyzeModel, cons: Conservation, totals: Float64Array, start: Float64Array): { y: Float64Array; residual: number } | null {
  const nS = model.nSpecies;
  const I = cons.independent;
  const r = I.length;
  const y = Float64Array.from(start);
  for (let i = 0; i < nS; i++) if (y[i] < 0) y[i] = 0;
  fillDependent(cons, totals, y);
  const sc: FluxScratch = { f: new Float64Array(model.nReactions), dydt: new Float64Array(nS), gross: new Float64Array(nS) };
  const trialScratch: FluxScratch = { f: new Float64Array(model.nReactions), dydt: new Float64Array(nS), gross: new Float64Array(nS) };
  const trial = new Float64Array(nS);
  const piv = new Int32Array(r);
  const step = new Float64Array(r);
  const stepFull = new Float64Array(nS);
  const norm = (s: FluxScratch) => {
    let v = 0;
    for (const i of I) v += s.dydt[i] * s.dydt[i];
    return Math.sqrt(v);
  };
  if (r === 0) return { y, residual: 0 };
  fluxes(model, y, sc);
  let fNorm = norm(sc);
  for (let iter = 0; iter < NEWTON_MAX_ITER; iter++) {
    const res = relativeResidual(model, cons, sc);
    if (res <= 1e-14) return { y, residual: res };
    const Jr = reducedJacobian(meanFieldJacobian(model, y), nS, cons);
    if (!luFactor(Jr, r, piv)) return null;
    for (let a = 0; a < r; a++) step[a] = -sc.dydt[I[a]];
    luSolve(Jr, r, piv, step);
    // Full-length step: independent entries, dependent ones through the link matrix.
    stepFull.fill(0);
    I.forEach((sp, a) => (stepFull[sp] = step[a]));
    cons.dependent.forEach((sp, d) => {
      let v = 0;
      for (let b = 0; b < r; b++) v += cons.link[d * r + b] * step[b];
      stepFull[sp] = v;
    });
    let lambda = 1;
    for (let i = 0; i < nS; i++) {
      if (stepFull[i] < 0 && y[i] + stepFull[i] < 0) lambda = Math.min(lambda, (0.99 * y[i]) / -stepFull[i]);
    }
    let accepted = false;
    let stepSize = 0;
    let ySize = 0;
    for (let halvings = 0; halvings < 40; halvings++) {
      for (let i = 0; i < nS; i++) trial[i] = y[i] + lambda * stepFull[i];
      fluxes(model, trial, trialScratch);
      const tNorm = norm(trialScratch);
      if (Number.isFinite(tNorm) && tNorm <= (1 - 1e-4 * lambda) * fNorm) {
        accepted = true;
        fNorm = tNorm;
        break;
      }
      lambda *= 0.5;
      if (lambda < 1e-12) break;
    }
    if (!accepted) {
      // No decrease: converged to round-off if the step itself is negligible, else give up.
      for (let i = 0; i < nS; i++) {
        stepSize = Math.max(stepSize, Math.abs(stepFull[i]));
        ySize = Math.max(ySize, Math.abs(y[i]));
      }
      // Round-off floor: no further decrease is possible, so accept a residual that is already tiny.
      const floor = relativeResidual(model, cons, sc);
      if (floor <= 1e-9 || stepSize <= 1e-12 * Math.max(ySize, 1e-300)) return floor <= 1e-6 ? { y, residual: floor } : null;
      return null;
    }
    for (let i = 0; i < nS; i++) {
      stepSize = Math.max(stepSize, Math.abs(trial[i] - y[i]));
      ySize = Math.max(ySize, Math.abs(trial[i]));
    }
    y.set(trial);
    sc.f.set(trialScratch.f);
    sc.dydt.set(trialScratch.dydt);
    sc.gross.set(trialScratch.gross);
    if (stepSize <= 1e-15 * ySize) {
      const r = relativeResidual(model, cons, sc);
      return r <= 1e-6 ? { y, residual: r } : null;
    }
  }
  return null;
}

/**
 * Stability of a steady state from the reduced Jacobian's eigenvalues (conserved moieties
 * removed): stable when every real part is below −tol; oscillatory when a complex pair has a
 * positive real part (past a Hopf bifurcation); tol = 1e-9·max(1, max|λ|) absorbs round-off.
 */
export function classify(reduced: Complex[]): { stable: boolean; oscillatory: boolean } {
  let scale = 1;
  for (const l of reduced) scale = Math.max(scale, Math.hypot(l.re, l.im));
  const tol = 1e-9 * scale;
  const stable = reduced.every((l) => l.re < -tol);
  const oscillatory = reduced.some((l) => l.re > tol && Math.abs(l.im) > tol);
  return { stable, oscillatory };
}

/**
 * The `analyze` result of CONTRACT.md §2 for a compiled model: steady state (model units unless
 * `units: "molecules"`), eigenvalues of the Jacobian there (the reduced system's, plus an exact
 * 0 for each conservation law; sorted by real part, largest first; in 1/model time), stability,
 * oscillation (Hopf), and the LNA covariance, CV and Fano in molecules when stable (else null).
 * Species with a zero steady state get CV and Fano null.
 * @throws SteadyStateError when no steady state is found; ModelInputError when a rate reads time, or the steady state sits on a piecewise switch.
 */
export function analyze(model: AnalyzeModel, options: AnalyzeOptions = {}): AnalyzeResult {
  const units = options.units ?? "model";
  if (units !== "model" && units !== "molecules") throw new RangeError(`units must be "model" or "molecules", got ${String(units)}`);
  const nS = model.nSpecies;
  const ss = findSteadyState(model, { tSettle: options.tSettle });
  // On a piecewise switch the active piece's derivative describes one side only: refuse rather than guess.
  const sw = switchingCondition(model, ss.y);
  if (sw) {
    throw new ModelInputError(`${sw.field}: the steady state (${sw.at}) sits where a piecewise condition switches, so the rate has no derivative there and stability and the LNA cannot be computed`);
  }
  const J = meanFieldJacobian(model, ss.y);
  const Jr = reducedJacobian(J, nS, ss.conservation);
  const reduced = eigenvalues(Jr, ss.conservation.independent.length);
  const { stable, oscillatory } = classify(reduced);
  const all = reduced.concat(ss.conservation.dependent.map(() => ({ re: 0, im: 0 })));
  all.sort((a, b) => b.re - a.re || b.im - a.im);
  const scale = units === "molecules" ? model.omega : 1;
  const steady: Record<string, number> = {};
  model.species.forEach((id, i) => (steady[id] = ss.y[i] * scale));
  let lna: AnalyzeResult["lna"] = null;
  if (stable) {
    const { covariance, mean } = linearNoise(model, ss.y, ss.conservation);
    const cov: number[][] = [];
    const cv: Record<string, number | null> = {};
    const fano: Record<string, number | null> = {};
    for (let i = 0; i < nS; i++) {
      cov.push(Array.from(covariance.subarray(i * nS, (i + 1) * nS)));
      const v = Math.max(0, covariance[i * nS + i]);
      const m = mean[i];
      const id = model.species[i];
      cv[id] = m > 0 ? Math.sqrt(v) / m : null;
      fano[id] = m > 0 ? v / m : null;
    }
    lna = { covariance: cov, cv, fano };
  }
  const eig = all.map((l) => ({ re: l.re, im: l.im }));
  const caveat = quasiCycleWarning({ eigenvalues: eig, stable }, "lna");
  return { steady_state: steady, eigenvalues: eig, stable, oscillatory, lna, warnings: caveat ? [caveat] : [] };
}
