/**
 * Adaptive ODE integrators for autonomous systems y' = f(y), sampled on an output grid:
 * Dormand–Prince 5(4) with its 4th-order continuous extension and Hairer's stiffness test, and
 * the stiffly accurate Rosenbrock method RODAS4 (order 4(3), L-stable) with a finite-difference
 * Jacobian, stepping exactly onto grid points. `auto` starts with Dormand–Prince and switches to
 * RODAS4 when the stiffness test fires. Pure: no I/O; scratch arrays are allocated once per call.
 */
import { luFactor, luSolve } from "./linalg";

/** Right-hand side: writes f(y) into dydt. Must not keep references to either array. */
export type OdeRhs = (y: Float64Array, dydt: Float64Array) => void;

export type OdeMethod = "auto" | "dopri5" | "rosenbrock";

export interface IntegrateOptions {
  method?: OdeMethod;
  /** Relative tolerance (default 1e-6). */
  rtol?: number;
  /** Absolute tolerance, in the units of y (default 1e-9). */
  atol?: number;
  /** Total step budget, accepted plus rejected (default 2,000,000). */
  maxSteps?: number;
  /** Largest step (default: the whole span). */
  hMax?: number;
  /** Exact Jacobian ∂f/∂y (row-major n×n, written into `jac`) for the stiff method; default: forward differences. */
  jacobian?: (y: Float64Array, jac: Float64Array) => void;
}

export interface IntegrateStats {
  /** Method that produced the last grid point ("dopri5" or "rosenbrock"). */
  method: "dopri5" | "rosenbrock";
  /** Time at which `auto` switched to the stiff method, or null. */
  switchedAt: number | null;
  steps: number;
  rejected: number;
  rhsEvaluations: number;
  jacobians: number;
}

export interface IntegrateResult {
  /** Row-major nTimes × n: values[k*n + i] is y_i at times[k]. */
  values: Float64Array;
  stats: IntegrateStats;
}

/** Thrown when an integration cannot finish (step budget spent, step size underflow, NaN). */
export class OdeError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "OdeError";
  }
}

const UROUND = 2.220446049250313e-16; // float64 unit round-off (IEEE 754)

/**
 * Integrates y' = f(y) from y(times[0]) = y0 and returns y at every entry of `times`
 * (strictly increasing). Tolerances act per component as atol + rtol·|y| in an RMS norm
 * (Hairer, Nørsett & Wanner, Solving ODEs I, §II.4).
 * @throws RangeError for bad arguments; OdeError when the integration fails.
 */
export function integrate(rhs: OdeRhs, y0: ArrayLike<number>, times: ArrayLike<number>, options: IntegrateOptions = {}): IntegrateResult {
  const n = y0.length;
  const nT = times.length;
  const rtol = options.rtol ?? 1e-6;
  const atol = options.atol ?? 1e-9;
  const method = options.method ?? "auto";
  if (!(rtol > 0 && rtol < 1)) throw new RangeError(`rtol must be in (0, 1), got ${rtol}`);
  if (!(atol > 0)) throw new RangeError(`atol must be > 0, got ${atol}`);
  if (method !== "auto" && method !== "dopri5" && method !== "rosenbrock") throw new RangeError(`method must be auto, dopri5 or rosenbrock, got ${String(method)}`);
  if (nT < 1) throw new RangeError("times must hold at least one point");
  for (let k = 1; k < nT; k++) if (!(times[k] > times[k - 1])) throw new RangeError("times must be strictly increasing");
  for (let i = 0; i < n; i++) if (!Number.isFinite(y0[i])) throw new RangeError(`y0[${i}] must be finite`);

  const st: IntegrateState = {
    rhs,
    n,
    times,
    rtol,
    atol,
    maxSteps: options.maxSteps ?? 2_000_000,
    hMax: options.hMax ?? times[nT - 1] - times[0],
    jacobian: options.jacobian,
    values: new Float64Array(nT * n),
    y: Float64Array.from(y0),
    t: times[0],
    next: 1,
    h: 0,
    stats: { method: method === "rosenbrock" ? "rosenbrock" : "dopri5", switchedAt: null, steps: 0, rejected: 0, rhsEvaluations: 0, jacobians: 0 },
  };
  st.values.set(st.y, 0);
  if (nT === 1 || n === 0) {
    for (let k = 1; k < nT; k++) st.values.set(st.y, k * n);
    return { values: st.values, stats: st.stats };
  }
  if (method === "rosenbrock") {
    rodas4(st);
  } else {
    const stiff = dopri5(st, method === "auto");
    if (stiff) {
      st.stats.method = "rosenbrock";
      st.stats.switchedAt = st.t;
      rodas4(st);
    }
  }
  return { values: st.values, stats: st.stats };
}

interface IntegrateState {
  rhs: OdeRhs;
  n: number;
  times: ArrayLike<number>;
  rtol: number;
  atol: number;
  maxSteps: number;
  hMax: number;
  jacobian?: (y: Float64Array, jac: Float64Array) => void;
  values: Float64Array;
  /** Current state and time; `next` is the first grid index not yet written. */
  y: Float64Array;
  t: number;
  next: number;
  /** Step size to try next (0: choose one). */
  h: number;
  stats: IntegrateStats;
}

function checkBudget(st: IntegrateState, h: number): void {
  if (st.stats.steps >= st.maxSteps) {
    throw new OdeError(`ode: step limit (${st.maxSteps}) reached at t = ${st.t}; try method "rosenbrock" or looser tolerances`);
  }
  if (!(Math.abs(h) > 10 * UROUND * Math.max(1, Math.abs(st.t)))) {
    throw new OdeError(`ode: step size underflow at t = ${st.t} (the solution may blow up or be discontinuous)`);
  }
}

/** Initial step guess: Hairer, Nørsett & Wanner I, §II.4 ("Starting step size"), p = order. */
function initialStep(st: IntegrateState, f0: Float64Array, order: number, scratchY: Float64Array, scratchF: Float64Array): number {
  const { n, y, rtol, atol } = st;
  let dnf = 0;
  let dny = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol + rtol * Math.abs(y[i]);
    dnf += (f0[i] / sk) ** 2;
    dny += (y[i] / sk) ** 2;
  }
  let h = dnf <= 1e-10 || dny <= 1e-10 ? 1e-6 : Math.sqrt(dny / dnf) * 0.01;
  h = Math.min(h, st.hMax);
  for (let i = 0; i < n; i++) scratchY[i] = y[i] + h * f0[i];
  st.rhs(scratchY, scratchF);
  st.stats.rhsEvaluations++;
  let der2 = 0;
  for (let i = 0; i < n; i++) {
    const sk = atol + rtol * Math.abs(y[i]);
    der2 += ((scratchF[i] - f0[i]) / sk) ** 2;
  }
  der2 = Math.sqrt(der2) / h;
  const der12 = Math.max(Math.abs(der2), Math.sqrt(dnf));
  const h1 = der12 <= 1e-15 ? Math.max(1e-6, h * 1e-3) : Math.pow(0.01 / der12, 1 / order);
  return Math.min(100 * h, h1, st.hMax);
}

// Dormand & Prince 1980, J Comput Appl Math 6:19, Table 2 (RK5(4)7M); error coefficients
// e = b − b̂; continuous extension of order 4 from Hairer's DOPRI5 code (Hairer, Nørsett &
// Wanner I, §II.6, "dense output"), coefficients d1…d7 as published there.
const C2 = 1 / 5, C3 = 3 / 10, C4 = 4 / 5, C5 = 8 / 9;
const A21 = 1 / 5;
const A31 = 3 / 40, A32 = 9 / 40;
const A41 = 44 / 45, A42 = -56 / 15, A43 = 32 / 9;
const A51 = 19372 / 6561, A52 = -25360 / 2187, A53 = 64448 / 6561, A54 = -212 / 729;
const A61 = 9017 / 3168, A62 = -355 / 33, A63 = 46732 / 5247, A64 = 49 / 176, A65 = -5103 / 18656;
const A71 = 35 / 384, A73 = 500 / 1113, A74 = 125 / 192, A75 = -2187 / 6784, A76 = 11 / 84;
const E1 = 71 / 57600, E3 = -71 / 16695, E4 = 71 / 1920, E5 = -17253 / 339200, E6 = 22 / 525, E7 = -1 / 40;
const D1 = -12715105075 / 11282082432, D3 = 87487479700 / 32700410799, D4 = -10690763975 / 1880347072;
const D5 = 701980252875 / 199316789632, D6 = -1453857185 / 822651844, D7 = 69997945 / 29380423;
void C2; void C3; void C4; void C5; // autonomous systems: the nodes c_i are not needed

/**
 * Dormand–Prince 5(4) with PI step control (β = 0.04) and Hairer's stiffness detection
 * (h·|λ| estimated from the last two stages exceeding 3.25 on 15 accepted steps).
 * Returns true when `detectStiff` is set and the problem was found stiff: st.t/st.y then hold
 * the last accepted point and integration continues elsewhere.
 */
function dopri5(st: IntegrateState, detectStiff: boolean): boolean {
  const { n, rhs, rtol, atol, times } = st;
  const tEnd = times[times.length - 1];
  const k1 = new Float64Array(n), k2 = new Float64Array(n), k3 = new Float64Array(n), k4 = new Float64Array(n);
  const k5 = new Float64Array(n), k6 = new Float64Array(n), k7 = new Float64Array(n);
  const y1 = new Float64Array(n), ysti = new Float64Array(n), ynew = new Float64Array(n);
  const r1 = new Float64Array(n), r2 = new Float64Array(n), r3 = new Float64Array(n), r4 = new Float64Array(n), r5 = new Float64Array(n);
  const y = st.y;
  const beta = 0.04;
  const expo1 = 0.2 - beta * 0.75;
  const safe = 0.9;
  let facold = 1e-4;
  let rejectedLast = false;
  let iasti = 0;
  let nonsti = 0;
  let accepted = 0;

  rhs(y, k1);
  st.stats.rhsEvaluations++;
  let h = st.h > 0 ? st.h : initialStep(st, k1, 5, y1, k2);
  for (;;) {
    checkBudget(st, h);
    let last = false;
    if (st.t + 1.01 * h >= tEnd) {
      h = tEnd - st.t;
      last = true;
    }
    for (let i = 0; i < n; i++) y1[i] = y[i] + h * A21 * k1[i];
    rhs(y1, k2);
    for (let i = 0; i < n; i++) y1[i] = y[i] + h * (A31 * k1[i] + A32 * k2[i]);
    rhs(y1, k3);
    for (let i = 0; i < n; i++) y1[i] = y[i] + h * (A41 * k1[i] + A42 * k2[i] + A43 * k3[i]);
    rhs(y1, k4);
    for (let i = 0; i < n; i++) y1[i] = y[i] + h * (A51 * k1[i] + A52 * k2[i] + A53 * k3[i] + A54 * k4[i]);
    rhs(y1, k5);
    for (let i = 0; i < n; i++) ysti[i] = y[i] + h * (A61 * k1[i] + A62 * k2[i] + A63 * k3[i] + A64 * k4[i] + A65 * k5[i]);
    rhs(ysti, k6);
    for (let i = 0; i < n; i++) ynew[i] = y[i] + h * (A71 * k1[i] + A73 * k3[i] + A74 * k4[i] + A75 * k5[i] + A76 * k6[i]);
    rhs(ynew, k7);
    st.stats.rhsEvaluations += 6;
    st.stats.steps++;
    let err = 0;
    for (let i = 0; i < n; i++) {
      const e = h * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
      const sk = atol + rtol * Math.max(Math.abs(y[i]), Math.abs(ynew[i]));
      err += (e / sk) ** 2;
    }
    err = Math.sqrt(err / n);
    if (!Number.isFinite(err)) {
      // NaN/Inf in a stage (e.g. a rate law evaluated outside its domain): shrink the step.
      st.stats.rejected++;
      rejectedLast = true;
      h *= 0.1;
      continue;
    }
    const fac11 = Math.pow(err, expo1);
    let fac = fac11 / Math.pow(facold, beta);
    fac = Math.max(0.1, Math.min(5, fac / safe));
    let hnew = h / fac;
    if (err <= 1) {
      facold = Math.max(err, 1e-4);
      accepted++;
      if (detectStiff && (accepted % 100 === 0 || iasti > 0)) {
        let stnum = 0;
        let stden = 0;
        for (let i = 0; i < n; i++) {
          stnum += (k7[i] - k6[i]) ** 2;
          stden += (ynew[i] - ysti[i]) ** 2;
        }
        if (stden > 0) {
          const hlamb = h * Math.sqrt(stnum / stden);
          if (hlamb > 3.25) {
            nonsti = 0;
            iasti++;
            if (iasti === 15) {
              // Stiff: emit nothing more here; hand the last accepted point to RODAS4.
              writeDense(st, ynew, h, y, k1, k3, k4, k5, k6, k7, r1, r2, r3, r4, r5);
              st.y.set(ynew);
              st.t = last ? tEnd : st.t + h;
              st.h = h;
              return st.next < times.length;
            }
          } else {
            nonsti++;
            if (nonsti === 6) iasti = 0;
          }
        }
      }
      writeDense(st, ynew, h, y, k1, k3, k4, k5, k6, k7, r1, r2, r3, r4, r5);
      k1.set(k7);
      y.set(ynew);
      st.t = last ? tEnd : st.t + h;
      if (last || st.next >= times.length) {
        fillRemaining(st);
        return false;
      }
      if (Math.abs(hnew) > st.hMax) hnew = st.hMax;
      if (rejectedLast) hnew = Math.min(hnew, h);
      rejectedLast = false;
      h = hnew;
    } else {
      hnew = h / Math.min(5, fac11 / safe);
      rejectedLast = true;
      if (accepted >= 1) st.stats.rejected++;
      h = hnew;
    }
  }
}

/** Writes every grid point in (t, t + h] from the Dormand–Prince continuous extension. */
function writeDense(
  st: IntegrateState, ynew: Float64Array, h: number, y: Float64Array,
  k1: Float64Array, k3: Float64Array, k4: Float64Array, k5: Float64Array, k6: Float64Array, k7: Float64Array,
  r1: Float64Array, r2: Float64Array, r3: Float64Array, r4: Float64Array, r5: Float64Array,
): void {
  const { n, times } = st;
  const tNew = st.t + h;
  if (st.next >= times.length || times[st.next] > tNew) return;
  for (let i = 0; i < n; i++) {
    const ydiff = ynew[i] - y[i];
    const bspl = h * k1[i] - ydiff;
    r1[i] = y[i];
    r2[i] = ydiff;
    r3[i] = bspl;
    r4[i] = ydiff - h * k7[i] - bspl;
    r5[i] = h * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
  }
  while (st.next < times.length && times[st.next] <= tNew * (1 + 4 * UROUND) + 4 * UROUND) {
    const tk = times[st.next];
    const off = st.next * n;
    if (tk >= tNew) {
      st.values.set(ynew, off);
    } else {
      const theta = (tk - st.t) / h;
      const theta1 = 1 - theta;
      for (let i = 0; i < n; i++) {
        st.values[off + i] = r1[i] + theta * (r2[i] + theta1 * (r3[i] + theta * (r4[i] + theta1 * r5[i])));
      }
    }
    st.next++;
  }
}

function fillRemaining(st: IntegrateState): void {
  while (st.next < st.times.length) {
    st.values.set(st.y, st.next * st.n);
    st.next++;
  }
}

// RODAS4: Hairer & Wanner, Solving ODEs II (2nd ed. 1996), §IV.7, Table 7.? "RODAS" coefficients
// as distributed with Hairer's rodas.f, written in the form (1/(hγ) − J)·k_i = f(y + Σ a_ij k_j)
// + Σ (c_ij/h)·k_j, y1 = y + Σ m_j k_j, error estimate k_6 (the method is stiffly accurate: the
// last two stages reproduce the solution and the embedded 3rd-order one).
const RG = 0.25;
const RA = [
  [],
  [1.544],
  [0.9466785280815826, 0.2557011698983284],
  [3.314825187068521, 2.896124015972201, 0.9986419139977817],
  [1.221224509226641, 6.019134481288629, 12.53708332932087, -0.687886036105895],
  [1.221224509226641, 6.019134481288629, 12.53708332932087, -0.687886036105895, 1],
];
const RC = [
  [],
  [-5.6688],
  [-2.430093356833875, -0.2063599157091915],
  [-0.1073529058151375, -9.594562251023355, -20.47028614809616],
  [7.496443313967647, -10.24680431464352, -33.99990352819905, 11.7089089320616],
  [8.083246795921522, -7.981132988064893, -31.52159432874371, 16.31930543123136, -6.058818238834054],
];
const RM = [1.221224509226641, 6.019134481288629, 12.53708332932087, -0.687886036105895, 1, 1];

/**
 * RODAS4 with the Jacobian refreshed every step: the caller's exact one, else forward differences
 * (δ_j = √(u·max(1e-5, |y_j|)), as in Hairer's codes), step control fac = 0.9·err^(−1/4) clipped to [0.2, 6], no growth after
 * a rejection, ×0.1 after two rejections in a row. Steps are shortened to land on grid points.
 */
function rodas4(st: IntegrateState): void {
  const { n, rhs, rtol, atol, times } = st;
  const tEnd = times[times.length - 1];
  const s = 6;
  const K: Float64Array[] = [];
  for (let i = 0; i < s; i++) K.push(new Float64Array(n));
  const f0 = new Float64Array(n);
  const fi = new Float64Array(n);
  const yi = new Float64Array(n);
  const ynew = new Float64Array(n);
  const jac = new Float64Array(n * n);
  const g = new Float64Array(n * n);
  const piv = new Int32Array(n);
  const y = st.y;
  let rejectedLast = false;
  let rejectedMore = false;

  rhs(y, f0);
  st.stats.rhsEvaluations++;
  let h = st.h > 0 ? st.h : initialStep(st, f0, 4, yi, fi);
  let needJac = true;
  for (;;) {
    if (needJac) {
      if (st.jacobian) st.jacobian(y, jac);
      else {
        finiteDifferenceJacobian(rhs, y, f0, jac, yi, fi, n);
        st.stats.rhsEvaluations += n;
      }
      st.stats.jacobians++;
      needJac = false;
    }
    checkBudget(st, h);
    let hStep = Math.min(h, st.hMax);
    const tTarget = times[st.next];
    let hitsGrid = false;
    if (st.t + hStep >= tTarget - 4 * UROUND * Math.abs(tTarget)) {
      hStep = tTarget - st.t;
      hitsGrid = true;
    }
    const ghinv = 1 / (hStep * RG);
    for (let i = 0; i < n * n; i++) g[i] = -jac[i];
    for (let i = 0; i < n; i++) g[i * n + i] += ghinv;
    st.stats.steps++;
    if (!luFactor(g, n, piv)) {
      st.stats.rejected++;
      h = hStep * 0.5;
      continue;
    }
    for (let stage = 0; stage < s; stage++) {
      const ks = K[stage];
      if (stage === 0) {
        ks.set(f0);
      } else {
        const a = RA[stage];
        for (let i = 0; i < n; i++) {
          let v = y[i];
          for (let j = 0; j < stage; j++) v += a[j] * K[j][i];
          yi[i] = v;
        }
        rhs(yi, fi);
        st.stats.rhsEvaluations++;
        const c = RC[stage];
        for (let i = 0; i < n; i++) {
          let v = fi[i];
          for (let j = 0; j < stage; j++) v += (c[j] / hStep) * K[j][i];
          ks[i] = v;
        }
      }
      luSolve(g, n, piv, ks);
    }
    let err = 0;
    for (let i = 0; i < n; i++) {
      let v = y[i];
      for (let j = 0; j < s; j++) v += RM[j] * K[j][i];
      ynew[i] = v;
      const sk = atol + rtol * Math.max(Math.abs(y[i]), Math.abs(v));
      err += (K[s - 1][i] / sk) ** 2;
    }
    err = Math.max(Math.sqrt(err / n), 1e-10);
    if (!Number.isFinite(err)) {
      st.stats.rejected++;
      rejectedMore = rejectedLast;
      rejectedLast = true;
      h = hStep * 0.1;
      continue;
    }
    const fac = Math.min(6, Math.max(0.2, 0.9 / Math.pow(err, 0.25)));
    let hnew = hStep * fac;
    if (err <= 1) {
      y.set(ynew);
      st.t = hitsGrid ? tTarget : st.t + hStep;
      if (hitsGrid) {
        st.values.set(y, st.next * n);
        st.next++;
        if (st.next >= times.length) return;
        // A step shortened to meet the grid says little about the step the solution allows.
        if (hStep < h) hnew = Math.max(hnew, h);
      }
      if (rejectedLast) hnew = Math.min(hnew, hStep);
      rejectedLast = false;
      rejectedMore = false;
      h = Math.min(hnew, st.hMax);
      rhs(y, f0);
      st.stats.rhsEvaluations++;
      needJac = true;
      if (st.t >= tEnd) return;
    } else {
      if (rejectedMore) hnew = hStep * 0.1;
      rejectedMore = rejectedLast;
      rejectedLast = true;
      st.stats.rejected++;
      h = hnew;
    }
  }
}

/**
 * Forward-difference Jacobian J_ij = ∂f_i/∂y_j (row-major), δ_j = √(u·max(1e-5, |y_j|)) as in
 * Hairer's RADAU5/RODAS drivers. `f0` = f(y); `yp`, `fp` are scratch.
 */
export function finiteDifferenceJacobian(
  rhs: OdeRhs, y: Float64Array, f0: Float64Array, jac: Float64Array, yp: Float64Array, fp: Float64Array, n: number,
): void {
  yp.set(y);
  for (let j = 0; j < n; j++) {
    const ysafe = y[j];
    const delta = Math.sqrt(UROUND * Math.max(1e-5, Math.abs(ysafe)));
    yp[j] = ysafe + delta;
    rhs(yp, fp);
    const d = yp[j] - ysafe; // the step actually representable
    for (let i = 0; i < n; i++) jac[i * n + j] = (fp[i] - f0[i]) / d;
    yp[j] = ysafe;
  }
}
