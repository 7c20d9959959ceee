/**
 * The oscillation verdict with a null model (issue 12 item 2): a species oscillates when the
 * autocorrelation function (ACF) of its fluctuations, averaged over cells, has a trough and a
 * second peak that noise without a rhythm cannot make at the stated false-positive rate.
 *
 * Why the ACF: every non-oscillating network we ship (birth–death, the two-stage reporter, a
 * telegraph gene) has a monotone, positive ACF (a sum of decaying exponentials with positive
 * weights), while a limit cycle or a noise-driven quasi-cycle has ρ(P/2) < 0 and a second peak
 * near the period P. The test asks for both: the first local minimum of the averaged ACF lies
 * significantly below zero, and the following peak rises significantly above that trough, each
 * by ACF_Z standard errors from Bartlett's formula (Bartlett 1946, J R Stat Soc Suppl 8:27;
 * Box, Jenkins & Reinsel, Time Series Analysis, eq. 2.1.13):
 *   Var(r_k) ≈ (1 + 2 Σ_{j<k} r_j²) / n_eff,   n_eff = N·(n − k) pairs from N independent cells.
 *
 * Mergeable and exact: the ACF is the ensemble autocovariance around the ensemble mean at each
 * time, γ(k) = [Σ_c Σ_t x_{c,t} x_{c,t+k} − Σ_t S_t S_{t+k} / N] / (N (n − k)) with S_t = Σ_c x_{c,t}.
 * Counts are integers, so each cell's lag sum Σ_t x_t x_{t+k} is an integer, and the sums over
 * cells are kept exactly in two float64 limbs (value = hi·2³² + lo), which add in any order to the
 * same bits; S_t is an integer sum too. So the verdict is the same whatever the thread count and
 * chunking. Pure: no I/O.
 */
import { makeWarning, type EngineWarning } from "./warnings";

/** The eigenvalue part of an analyze result (ssa/analyze.ts imports this module). */
interface AnalyzeResult {
  eigenvalues: { re: number; im: number }[];
  stable: boolean;
}

const fmt = (v: number) => Number(v.toPrecision(3)).toString();

/** Most lags of the ACF (cost per cell ∝ samples × lags); periods beyond ACF_MAX_LAGS·dt are not seen. */
export const ACF_MAX_LAGS = 128;
/**
 * Cells 0 … ACF_MAX_CELLS − 1 feed the ACF (a fixed set, so chunking cannot change it). Measured
 * here: a cell's lag sums cost about 0.25 ms per species at 1,600 samples × 128 lags, a tenth of a
 * 1,000-cell ring-timer run if every cell took part; 200 cells already put the noise floor of the
 * averaged ACF near 0.01, far below any rhythm worth the name.
 */
export const ACF_MAX_CELLS = 200;
/** Standard errors the trough and the rise must clear (one-sided normal tail 3.2e-5 each). */
export const ACF_Z = 4;
/** Fewest samples per period for a period to be reported (Nyquist needs 2; 8 resolves the shape; common practice). */
export const MIN_SAMPLES_PER_PERIOD = 8;
/**
 * A stable steady state "rings" (noise-driven quasi-cycles, the LNA caveat) when its least-stable
 * complex pair has |Re λ| < QUASI_CYCLE_RATIO·|Im λ|: the mode's amplitude then decays by less
 * than e^(−2π·0.1) ≈ 0.53 per cycle, so several cycles stand out of the noise (common practice;
 * the resonant amplification of demographic noise, McKane & Newman 2005, PRL 94:218102).
 */
export const QUASI_CYCLE_RATIO = 0.1;

const LIMB = 4294967296; // 2^32

/** Exact lag sums of one species over a set of cells: entry k is lag k (hi·2³² + lo). */
export interface AcfSums {
  /** Grid indices [start, end) the ACF uses (after burn-in, uniform spacing only). */
  start: number;
  end: number;
  lags: number;
  /** Per species s and lag k, entry s·(lags + 1) + k. */
  hi: Float64Array;
  lo: Float64Array;
  /** Cells summed (those below ACF_MAX_CELLS). */
  cells: number;
  /** Per species s and grid index start + t, entry s·(end − start) + t: Σ over those cells of the count (exact). */
  pointSums: Float64Array;
}

/** Grid range and lag count of the ACF for a grid and burn-in index: the uniform part after burn-in. */
export function acfRange(grid: ArrayLike<number>, gStart: number): { start: number; end: number; lags: number } {
  let end = grid.length;
  // makeGrid appends tEnd when dt does not divide it; that last step is shorter, so it is left out.
  if (end >= 3) {
    const d1 = grid[end - 1] - grid[end - 2];
    const d0 = grid[1] - grid[0];
    if (Math.abs(d1 - d0) > 1e-9 * Math.abs(d0)) end--;
  }
  const n = end - gStart;
  const lags = n >= 8 ? Math.min(ACF_MAX_LAGS, Math.floor((n - 1) / 2)) : 0;
  return { start: gStart, end, lags };
}

/** Empty sums for nSpecies species. */
export function makeAcfSums(nSpecies: number, range: { start: number; end: number; lags: number }): AcfSums {
  const m = nSpecies * (range.lags + 1);
  return { ...range, hi: new Float64Array(m), lo: new Float64Array(m), cells: 0, pointSums: new Float64Array(range.lags > 0 ? nSpecies * (range.end - range.start) : 0) };
}

/** Adds an integer-valued v ≥ 0 to entry j exactly. */
function addExact(hi: Float64Array, lo: Float64Array, j: number, v: number): void {
  const vh = Math.floor(v / LIMB);
  const l = lo[j] + (v - vh * LIMB);
  const c = Math.floor(l / LIMB);
  lo[j] = l - c * LIMB;
  hi[j] += vh + c;
}

/**
 * Adds one cell's lag sums Σ_t x_t x_{t+k} (k = 0 … lags) and samples of species s to `acc`; the
 * cell's samples are y[offset + g·stride] for g in [start, end). `scratch` holds end − start
 * values. Call countAcfCell once per cell after its species.
 */
export function addCellLagSums(acc: AcfSums, s: number, y: Float64Array, offset: number, stride: number, scratch: Float64Array): void {
  const n = acc.end - acc.start;
  if (acc.lags === 0) return;
  const u = scratch;
  const ps = acc.pointSums;
  for (let g = acc.start, t = 0; g < acc.end; g++, t++) {
    u[t] = y[offset + g * stride];
    ps[s * n + t] += u[t];
  }
  const base = s * (acc.lags + 1);
  // Four lags per pass over the samples, the four partners u[t+k … t+k+3] kept in a sliding
  // window (one new load per step); every lag's sum still runs over t in order, so the bits equal
  // the one-lag-at-a-time loop.
  let k = 0;
  for (; k + 3 <= acc.lags; k += 4) {
    let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    const m = n - k - 3;
    let w0 = u[k], w1 = u[k + 1], w2 = u[k + 2];
    for (let t = 0; t < m; t++) {
      const a = u[t];
      const w3 = u[t + k + 3];
      s0 += a * w0;
      s1 += a * w1;
      s2 += a * w2;
      s3 += a * w3;
      w0 = w1;
      w1 = w2;
      w2 = w3;
    }
    for (let t = Math.max(0, m); t + k < n; t++) {
      const a = u[t];
      s0 += a * u[t + k];
      if (t + k + 1 < n) s1 += a * u[t + k + 1];
      if (t + k + 2 < n) s2 += a * u[t + k + 2];
    }
    addExact(acc.hi, acc.lo, base + k, s0);
    addExact(acc.hi, acc.lo, base + k + 1, s1);
    addExact(acc.hi, acc.lo, base + k + 2, s2);
    addExact(acc.hi, acc.lo, base + k + 3, s3);
  }
  for (; k <= acc.lags; k++) {
    let sum = 0;
    for (let t = 0; t + k < n; t++) sum += u[t] * u[t + k];
    addExact(acc.hi, acc.lo, base + k, sum);
  }
}

/** Records that one more cell was added. */
export function countAcfCell(acc: AcfSums): void {
  acc.cells++;
}

/** Sum of two AcfSums of the same run (exact, so any order gives the same bits). @throws RangeError for different shapes. */
export function mergeAcfSums(a: AcfSums, b: AcfSums): AcfSums {
  if (a.start !== b.start || a.end !== b.end || a.lags !== b.lags || a.hi.length !== b.hi.length) throw new RangeError("mergeAcfSums: different shapes");
  const hi = new Float64Array(a.hi.length);
  const lo = new Float64Array(a.lo.length);
  for (let j = 0; j < hi.length; j++) {
    const l = a.lo[j] + b.lo[j];
    const c = Math.floor(l / LIMB);
    lo[j] = l - c * LIMB;
    hi[j] = a.hi[j] + b.hi[j] + c;
  }
  const pointSums = new Float64Array(a.pointSums.length);
  for (let j = 0; j < pointSums.length; j++) pointSums[j] = a.pointSums[j] + b.pointSums[j];
  return { start: a.start, end: a.end, lags: a.lags, hi, lo, cells: a.cells + b.cells, pointSums };
}

/** The evidence behind a verdict, reported per species in `period.<id>.acf`. */
export interface AcfEvidence {
  method: "acf-trough-peak-bartlett";
  /** Standard errors required (ACF_Z), the lags examined and the cells averaged. */
  z: number;
  lags: number;
  cells: number;
  /** Lag (model time) and ACF value of the first local minimum; null when the ACF has none. */
  trough: { lag: number; acf: number; threshold: number } | null;
  /** Lag and ACF of the highest point after the trough (within three trough lags); null when none. */
  peak: { lag: number; acf: number } | null;
  /** Peak strength: ACF(peak) − ACF(trough), and what noise alone reaches with probability ≤ 3.2e-5. */
  strength: number | null;
  threshold: number | null;
  /** Period from the peak's lag (parabolic interpolation between lags), model time. */
  period: number | null;
  /** Whether both the trough and the rise clear their thresholds. */
  significant: boolean;
}

/** The averaged ACF of species s over the cells in `acc`, and the verdict; `dt` is the grid step. */
export function acfVerdict(acc: AcfSums, s: number, dt: number): AcfEvidence {
  const cells = acc.cells;
  const none: AcfEvidence = { method: "acf-trough-peak-bartlett", z: ACF_Z, lags: acc.lags, cells: acc.cells, trough: null, peak: null, strength: null, threshold: null, period: null, significant: false };
  const L = acc.lags;
  const n = acc.end - acc.start;
  if (L < 3 || cells < 1) return none;
  const S = acc.pointSums.subarray(s * n, (s + 1) * n);
  const base = s * (L + 1);
  const gamma = new Float64Array(L + 1);
  for (let k = 0; k <= L; k++) {
    let mm = 0;
    for (let t = 0; t + k < n; t++) mm += S[t] * S[t + k];
    const xx = acc.hi[base + k] * LIMB + acc.lo[base + k];
    gamma[k] = (xx - mm / cells) / (cells * (n - k));
  }
  if (!(gamma[0] > 0)) return none;
  const r = Array.from(gamma, (g) => g / gamma[0]);
  // Bartlett's standard error of r_k, with the running Σ_{j<k} r_j².
  const se = new Float64Array(L + 1);
  let acc2 = 0;
  for (let k = 1; k <= L; k++) {
    se[k] = Math.sqrt((1 + 2 * acc2) / (cells * (n - k)));
    acc2 += r[k] * r[k];
  }
  let tr = -1;
  for (let k = 1; k < L; k++) if (r[k] <= r[k - 1] && r[k] < r[k + 1]) { tr = k; break; }
  if (tr < 0) return none;
  const trough = { lag: tr * dt, acf: r[tr], threshold: -ACF_Z * se[tr] };
  let pk = -1;
  const stop = Math.min(L, 3 * tr);
  for (let k = tr + 1; k <= stop; k++) if (pk < 0 || r[k] > r[pk]) pk = k;
  // The peak must be a local maximum inside the window, not the end of a rise.
  if (pk < 0 || pk >= L || r[pk + 1] > r[pk]) return { ...none, trough };
  const strength = r[pk] - r[tr];
  const threshold = ACF_Z * Math.hypot(se[pk], se[tr]);
  const denom = r[pk - 1] - 2 * r[pk] + r[pk + 1];
  const shift = denom < 0 ? Math.max(-0.5, Math.min(0.5, (0.5 * (r[pk - 1] - r[pk + 1])) / denom)) : 0;
  return {
    ...none,
    trough,
    peak: { lag: pk * dt, acf: r[pk] },
    strength,
    threshold,
    period: (pk + shift) * dt,
    significant: r[tr] < trough.threshold && strength > threshold,
  };
}

/** Decaying or sustained: the fit behind the mean-field trace's verdict (issue 12 item 4). */
export interface AmplitudeTrend {
  /** Fitted e-folding time of the cycle amplitude (model time); Infinity when not decaying. */
  dampingTime: number;
  /** Amplitude at the end of the fitted window over the amplitude at its start (from the fit). */
  ratio: number;
  cycles: number;
}

/**
 * Least-squares slope of ln(amplitude) against time over the last half of the cycles (the "last
 * part of the trace"): amplitudes[j] belongs to the cycle ending at start + Σ_{i≤j} periods[i].
 */
export function fitAmplitudeTrend(periods: ArrayLike<number>, amplitudes: ArrayLike<number>): AmplitudeTrend {
  const n = periods.length;
  const from = Math.floor(n / 2);
  const ts: number[] = [];
  const ys: number[] = [];
  let t = 0;
  for (let j = 0; j < n; j++) {
    t += periods[j];
    if (j >= from && amplitudes[j] > 0) {
      ts.push(t);
      ys.push(Math.log(amplitudes[j]));
    }
  }
  if (ts.length < 3) return { dampingTime: Infinity, ratio: 1, cycles: ts.length };
  const mt = ts.reduce((a, b) => a + b, 0) / ts.length;
  const my = ys.reduce((a, b) => a + b, 0) / ys.length;
  let sxy = 0;
  let sxx = 0;
  for (let j = 0; j < ts.length; j++) {
    sxy += (ts[j] - mt) * (ys[j] - my);
    sxx += (ts[j] - mt) * (ts[j] - mt);
  }
  const slope = sxx > 0 ? sxy / sxx : 0;
  const span = ts[ts.length - 1] - ts[0];
  return { dampingTime: slope < 0 ? -1 / slope : Infinity, ratio: Math.exp(slope * span), cycles: ts.length };
}

/** A trace is damped when the fitted amplitude falls by more than this fraction over the last half of its cycles. */
export const DAMPED_DROP = 0.05;

/** Complex eigenvalue pairs (one of each, Im > 0), least stable first. */
export function complexModes(an: Pick<AnalyzeResult, "eigenvalues">): { re: number; im: number }[] {
  let scale = 1;
  for (const l of an.eigenvalues) scale = Math.max(scale, Math.hypot(l.re, l.im));
  return an.eigenvalues.filter((l) => l.im > 1e-9 * scale).sort((a, b) => b.re - a.re);
}

/**
 * The LNA caveat (issue 12 item 4): a stable steady state whose least-stable complex pair has
 * |Re λ| < QUASI_CYCLE_RATIO·|Im λ| shows noise-driven cycles of period about 2π/|Im λ|, which
 * the Gaussian LNA covariance does not describe as a rhythm. Null when the rule does not apply.
 */
export function quasiCycleWarning(an: Pick<AnalyzeResult, "eigenvalues" | "stable">, field = "lna"): EngineWarning | null {
  if (!an.stable) return null;
  const mode = complexModes(an)[0];
  if (!mode || !(Math.abs(mode.re) < QUASI_CYCLE_RATIO * mode.im)) return null;
  return makeWarning(
    "quasi-cycles",
    `The steady state is stable but lightly damped (least-stable eigenvalues ${fmt(mode.re)} ± ${fmt(mode.im)}i: |Re λ| < ${QUASI_CYCLE_RATIO}·|Im λ|), so noise drives cycles of period about ${fmt((2 * Math.PI) / mode.im)} that decay with time constant ${fmt(-1 / mode.re)}; the linear noise approximation gives their variance, not their rhythm.`,
    field,
  );
}

