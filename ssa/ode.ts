/**
 * Mean-field trace of a compiled circuit: dy/dt = Sᵀ·f(y) (SCIENCE.md "Deterministic model"),
 * integrated by ode-solvers.ts and sampled on the grid 0, dt, 2dt, …, tEnd. Pure: no I/O.
 */
import { timeBreakpoints } from "./expr-ast";
import { makeGrid } from "./grid";
import { meanFieldJacobianEvaluator, rateTimeDerivative, type JacobianModel } from "./lna";
import type { Model } from "./model";
import { integrate, type IntegrateStats, type OdeMethod, type OdeRhs } from "./ode-solvers";
import type { FiringRecord } from "./schedule";
import { ScheduleRuntime } from "./schedule-runtime";

export { OdeError, integrate, type OdeMethod, type OdeRhs, type IntegrateOptions, type IntegrateStats } from "./ode-solvers";

/** The part of a compiled Model the deterministic code needs (and its schedule, when it has one). */
export type MeanFieldModel = Pick<Model, "species" | "nSpecies" | "nReactions" | "omega" | "initialAmounts" | "netStoich" | "rates"> & { schedule?: Model["schedule"] } & Partial<Pick<Model, "timeReactions">>;

export interface SolveOdeOptions {
  /** End of the grid, in the model's time unit. */
  tEnd: number;
  /** Grid spacing, in the model's time unit. */
  dt: number;
  method?: OdeMethod;
  rtol?: number;
  atol?: number;
  /** "model" (default): model amounts; "molecules": amounts × Ω. */
  units?: "model" | "molecules";
  /** Start from these amounts (model units) instead of model.initialAmounts. */
  y0?: ArrayLike<number>;
  maxSteps?: number;
}

export interface OdeSolution {
  units: "model" | "molecules";
  species: string[];
  times: number[];
  /** Path of each species on the grid. */
  trace: Record<string, number[]>;
  /** Final state in model units (whatever `units` is). */
  final: Float64Array;
  stats: IntegrateStats;
  /** What the circuit's schedule did along the trace (one "cell"); absent without a schedule. */
  firings?: FiringRecord;
}

/** The output grid: the same points as an ensemble's (ssa/grid.ts). */
export const outputGrid = makeGrid;

/** Right-hand side dy/dt = Sᵀ·f(y) of a model, in model amount per model time (rates that read `t` see t = 0; see meanFieldRhsAt). */
export function meanFieldRhs(model: MeanFieldModel): OdeRhs {
  const f = meanFieldRhsAt(model);
  return (y, dydt) => f(y, dydt, 0);
}

/** Right-hand side dy/dt = Sᵀ·f(y, t) at model time t, in model amount per model time. */
export function meanFieldRhsAt(model: MeanFieldModel): (y: Float64Array, dydt: Float64Array, t: number) => void {
  const nS = model.nSpecies;
  const nR = model.nReactions;
  const S = model.netStoich;
  // Sparse copy of the stoichiometry (reaction, species, change), so the RHS skips zeros.
  const rIdx: number[] = [];
  const sIdx: number[] = [];
  const delta: number[] = [];
  for (let r = 0; r < nR; r++) {
    for (let i = 0; i < nS; i++) {
      const v = S[r * nS + i];
      if (v !== 0) {
        rIdx.push(r);
        sIdx.push(i);
        delta.push(v);
      }
    }
  }
  const ri = Int32Array.from(rIdx);
  const si = Int32Array.from(sIdx);
  const dv = Float64Array.from(delta);
  const rates = new Float64Array(nR);
  return (y, dydt, t) => {
    model.rates(y, rates, t);
    dydt.fill(0);
    for (let p = 0; p < ri.length; p++) dydt[si[p]] += dv[p] * rates[ri[p]];
  };
}

/**
 * Integrates the mean field of `model` and samples it on the grid 0, dt, …, tEnd.
 * Dormand–Prince 5(4) by default, switching to RODAS4 when the problem turns out stiff
 * (`method: "auto"`); `dopri5` or `rosenbrock` force one method.
 * @throws RangeError for bad options; OdeError when the integration fails.
 */
export function solveOde(model: MeanFieldModel, options: SolveOdeOptions): OdeSolution {
  const units = options.units ?? "model";
  if (units !== "model" && units !== "molecules") throw new RangeError(`units must be "model" or "molecules", got ${String(units)}`);
  const grid = outputGrid(options.tEnd, options.dt);
  const y0 = options.y0 ?? model.initialAmounts;
  if (y0.length !== model.nSpecies) throw new RangeError(`y0 must have ${model.nSpecies} entries, got ${y0.length}`);
  const integrateOptions = { method: options.method, rtol: options.rtol, atol: options.atol, maxSteps: options.maxSteps };
  const { values, stats, firings } = model.schedule
    ? integrateScheduled(model as Model, y0, grid, integrateOptions)
    : { ...integrateMeanField(model, y0, grid, integrateOptions), firings: undefined };
  const nS = model.nSpecies;
  const scale = units === "molecules" ? model.omega : 1;
  const trace: Record<string, number[]> = {};
  model.species.forEach((id, i) => {
    const path = new Array<number>(grid.length);
    for (let k = 0; k < grid.length; k++) path[k] = values[k * nS + i] * scale;
    trace[id] = path;
  });
  const final = values.slice((grid.length - 1) * nS);
  return { units, species: model.species.slice(), times: Array.from(grid), trace, final, stats, ...(firings ? { firings } : {}) };
}

/** A compiled Model knows its rate laws, so the stiff method gets the exact Jacobian. */
function exactJacobian(model: MeanFieldModel) {
  return isCompiled(model) ? meanFieldJacobianEvaluator(model) : undefined;
}

const isCompiled = (model: MeanFieldModel): model is MeanFieldModel & JacobianModel => "law" in model && "expressions" in model;

/**
 * The mean field from `y0` at times[0], sampled at `times` (row-major times × nSpecies). When a
 * rate reads the time `t`, the system is made autonomous (common practice, e.g. Hairer, Nørsett &
 * Wanner, Solving ODEs I, §I.1): the state gains τ with dτ/dt = 1 and τ(times[0]) = times[0], so
 * the solvers, written for y' = f(y), integrate y' = f(y, τ) with τ = t (a linear component is
 * integrated exactly by the Runge–Kutta and Rosenbrock methods, up to round-off); the Jacobian
 * gains the column Sᵀ·∂f/∂t and a zero row. τ is dropped from the result. A condition on time
 * alone (`t < 50`) switches at a known time (timeBreakpoints): the integration stops there and
 * restarts, and within each piece τ is held strictly inside it (one float step from either end),
 * so every stage of a step sees that piece's rates (the value at a switch is the left or right
 * limit, as the piece requires) and a jump costs no accuracy.
 */
function integrateMeanField(model: MeanFieldModel, y0: ArrayLike<number>, times: ArrayLike<number>, o: { method?: OdeMethod; rtol?: number; atol?: number; maxSteps?: number }): { values: Float64Array; stats: IntegrateStats } {
  if (!(model.timeReactions && model.timeReactions.length > 0)) return integrate(meanFieldRhs(model), y0, times, { ...o, jacobian: exactJacobian(model) });
  const nS = model.nSpecies;
  const n = nS + 1;
  const f = meanFieldRhsAt(model);
  // τ is clamped to [lo, hi], the open piece being integrated (set per piece below).
  let lo = -Infinity;
  let hi = Infinity;
  const clock = (tau: number) => (tau < lo ? lo : tau > hi ? hi : tau);
  const rhs: OdeRhs = (ya, da) => {
    f(ya.subarray(0, nS), da.subarray(0, nS), clock(ya[nS]));
    da[nS] = 1;
  };
  let jacobian: ((y: Float64Array, jac: Float64Array) => void) | undefined;
  if (isCompiled(model)) {
    const jy = meanFieldJacobianEvaluator(model);
    const J = new Float64Array(nS * nS);
    const dft = new Float64Array(model.nReactions);
    const S = model.netStoich;
    const m = model;
    jacobian = (ya, out) => {
      const y = ya.subarray(0, nS);
      const t = clock(ya[nS]);
      jy(y, J, t);
      rateTimeDerivative(m, y, t, dft);
      out.fill(0);
      for (let i = 0; i < nS; i++) for (let j = 0; j < nS; j++) out[i * n + j] = J[i * nS + j];
      for (const r of m.timeReactions ?? []) for (let i = 0; i < nS; i++) out[i * n + nS] += S[r * nS + i] * dft[r];
    };
  }
  const nT = times.length;
  const t0 = times[0];
  const tN = times[nT - 1];
  const cuts = new Set<number>();
  if (isCompiled(model)) {
    const params = new Map(Object.entries(model.parameters));
    for (const j of model.timeReactions) for (const b of timeBreakpoints(model.expressions[j] as NonNullable<Model["expressions"][number]>, params)) if (b > t0 && b < tN) cuts.add(b);
  }
  const edges = [t0, ...[...cuts].sort((a, b) => a - b), tN];
  const values = new Float64Array(nT * nS);
  const y = new Float64Array(n);
  for (let i = 0; i < nS; i++) y[i] = y0[i];
  y[nS] = t0;
  for (let i = 0; i < nS; i++) values[i] = y0[i];
  let stats: IntegrateStats | null = null;
  let k = 1; // next output time to fill
  for (let e = 0; e + 1 < edges.length && k < nT; e++) {
    const a = edges[e];
    const b = edges[e + 1];
    lo = nextFloat(a, 1);
    hi = nextFloat(b, -1);
    if (hi < lo) lo = hi = a + (b - a) / 2;
    const sub: number[] = [a];
    const at: number[] = [];
    while (k < nT && times[k] < b) {
      if (times[k] > a) sub.push(times[k]);
      at.push(k++);
    }
    if (k < nT && times[k] === b) at.push(k++);
    sub.push(b);
    y[nS] = a;
    const r = integrate(rhs, y, sub, { ...o, jacobian });
    stats = stats ? addStats(stats, r.stats) : r.stats;
    // Output times in (a, b] come in order: sub[1..] are exactly the ones pushed, then b.
    let q = 1;
    for (const idx of at) {
      while (q < sub.length - 1 && sub[q] < times[idx]) q++;
      const row = times[idx] === b ? sub.length - 1 : q;
      values.set(r.values.subarray(row * n, row * n + nS), idx * nS);
    }
    y.set(r.values.subarray((sub.length - 1) * n, sub.length * n));
  }
  return { values, stats: stats as IntegrateStats };
}

/** The float next to x towards +∞ (dir 1) or −∞ (dir −1). */
function nextFloat(x: number, dir: 1 | -1): number {
  if (!Number.isFinite(x)) return x;
  if (x === 0) return dir * Number.MIN_VALUE;
  const buf = new Float64Array([x]);
  const bits = new BigInt64Array(buf.buffer);
  bits[0] += (x > 0) === (dir > 0) ? 1n : -1n;
  return buf[0];
}

/** Points per grid step at which the mean field's trigger conditions are checked. */
export const TRIGGER_CHECKS_PER_STEP = 8;
/** Bisection steps that locate a trigger's crossing between two checks (the bracket shrinks to 2^−40, or to 10^−10 of the time). */
const CROSSING_BISECTIONS = 40;

/**
 * The mean field of a model with a schedule, on `grid`, walked by the same runtime as the
 * stochastic kernel (ssa/schedule-runtime.ts): integrated piece by piece, each timed change or
 * delayed firing a hard stop where the species it sets jump to their new amounts and the rates
 * in force change (right-continuous, as the stochastic kernels sample). Trigger conditions are
 * checked TRIGGER_CHECKS_PER_STEP times per grid step; a condition found to have turned true is
 * located by bisection between the last two checks (to 2^−40 of their spacing, or 10^−10 of the time) and the change
 * applied there. A condition that turns true and false again between two checks is missed (the
 * direct method, which checks after every reaction, is not subject to this). The step counts add
 * over pieces.
 */
function integrateScheduled(model: Model, y0: ArrayLike<number>, grid: Float64Array, o: { method?: OdeMethod; rtol?: number; atol?: number; maxSteps?: number }): { values: Float64Array; stats: IntegrateStats; firings: FiringRecord } {
  const sch = model.schedule as NonNullable<Model["schedule"]>;
  const rt = new ScheduleRuntime(model, sch, "amounts");
  const nS = model.nSpecies;
  const nG = grid.length;
  const tLast = grid[nG - 1];
  const values = new Float64Array(nG * nS);
  const y = Float64Array.from(y0);
  let stats: IntegrateStats | null = null;
  const run = (from: Float64Array, times: number[]) => {
    const r = integrateMeanField(rt.phase, from, Float64Array.from(times), o);
    stats = stats ? addStats(stats, r.stats) : r.stats;
    return r.values;
  };
  const check = rt.hasTriggers && nG > 1 ? (grid[1] - grid[0]) / TRIGGER_CHECKS_PER_STEP : Infinity;
  let t = grid[0];
  rt.start(y);
  let g = 0;
  while (g < nG) {
    // Grid points at the current time show the state now (after the changes at it).
    while (g < nG && grid[g] <= t) values.set(y, nS * g++);
    if (g === nG) break;
    const stopAt = rt.nextStop();
    const stop = Math.min(stopAt, tLast);
    // The piece's times: now, the grid points and checks before the stop, the stop.
    const sub: number[] = [t];
    const isGrid: boolean[] = [false];
    let h = g;
    let c = t + check;
    while (true) {
      const next = Math.min(h < nG ? grid[h] : Infinity, c, stop);
      if (next >= stop) break;
      sub.push(next);
      isGrid.push(h < nG && next === grid[h]);
      if (h < nG && next === grid[h]) h++;
      if (next === c) c += check;
      else if (c - next < 1e-12 * check) c = next + check; // a check falling on a grid point
    }
    sub.push(stop);
    isGrid.push(false);
    const v = run(y, sub);
    let crossed = false;
    for (let q = 1; q < sub.length; q++) {
      const yq = v.subarray(q * nS, (q + 1) * nS);
      if (rt.hasTriggers && rt.wouldFire(yq)) {
        // A condition turned true in (sub[q−1], sub[q]]: bisect for the crossing.
        let lo = sub[q - 1];
        let hi = sub[q];
        let ylo = Float64Array.from(v.subarray((q - 1) * nS, q * nS));
        let yhi = Float64Array.from(yq);
        const tol = 1e-10 * Math.max(1, Math.abs(hi));
        for (let b = 0; b < CROSSING_BISECTIONS && hi - lo > tol; b++) {
          const mid = lo + (hi - lo) / 2;
          if (mid <= lo || mid >= hi) break;
          const ym = run(ylo, [lo, mid]).slice(nS);
          if (rt.wouldFire(ym)) {
            hi = mid;
            yhi = ym;
          } else {
            rt.observe(ym);
            lo = mid;
            ylo = ym;
          }
        }
        y.set(yhi);
        t = hi;
        rt.checkTriggers(y, t);
        crossed = true;
        break;
      }
      if (rt.hasTriggers) rt.observe(yq);
      if (isGrid[q]) values.set(yq, nS * g++);
    }
    if (crossed) continue;
    y.set(v.subarray((sub.length - 1) * nS));
    t = stop;
    if (stopAt <= t) rt.applyDue(y, t);
    else if (t >= tLast) {
      while (g < nG) values.set(y, nS * g++);
    }
  }
  return { values, stats: stats ?? { method: "dopri5", switchedAt: null, steps: 0, rejected: 0, rhsEvaluations: 0, jacobians: 0 }, firings: { cells: 1, firstAt: rt.firstAt.slice(), count: rt.count.slice() } };
}

/** Step counts of two pieces of one integration; method and switch time of the later piece that has them. */
function addStats(a: IntegrateStats, b: IntegrateStats): IntegrateStats {
  return {
    method: b.method,
    switchedAt: a.switchedAt ?? b.switchedAt,
    steps: a.steps + b.steps,
    rejected: a.rejected + b.rejected,
    rhsEvaluations: a.rhsEvaluations + b.rhsEvaluations,
    jacobians: a.jacobians + b.jacobians,
  };
}
