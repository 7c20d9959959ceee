/**
 * Poisson variates from a cell's uniform stream, for tau-leaping. Pure: no I/O.
 *
 * - mean < 64: the mean is split as μ = μ₀ + δ with μ₀ = ⌊4μ⌋/4 and 0 ≤ δ < 1/4, and
 *   Poisson(μ) = Poisson(μ₀) + Poisson(δ) (the sum of independent Poisson variables is Poisson,
 *   textbook). Poisson(μ₀) is drawn by inversion of a tabulated CDF, started from a guide table
 *   (Chen & Asau 1974, J Chinese Inst Eng; Devroye 1986, Non-Uniform Random Variate Generation,
 *   §III.2.4): one uniform and on average under two comparisons. Poisson(δ) is drawn by sequential
 *   inversion (Devroye §X.3), where u < 1 − δ ≤ e^(−δ) answers 0 before any exponential. The
 *   tables cover k ≤ μ₀ + 12√μ₀ + 20 (the tail beyond holds less than 1e−25; 30,000 entries,
 *   360 KB) and are built once per thread when the module loads.
 * - mean ≥ 64: transformed rejection with squeeze, "PTRS" (Hörmann 1993, Insurance: Mathematics
 *   and Economics 12:39), with the constants of that paper.
 * Both branches are exact up to the round-off of the probabilities in double precision.
 */
import type { CellRng } from "./rng";

const LOG_FACTORIAL_TABLE_SIZE = 256;
const LOG_FACTORIAL: Float64Array = (() => {
  const t = new Float64Array(LOG_FACTORIAL_TABLE_SIZE);
  for (let k = 1; k < LOG_FACTORIAL_TABLE_SIZE; k++) t[k] = t[k - 1] + Math.log(k);
  return t;
})();

/** ln k! ; a table below 256, else Stirling's series to 1/(1260 m⁵) with m = k + 1 (Abramowitz & Stegun 6.1.41). */
export function logFactorial(k: number): number {
  if (k < LOG_FACTORIAL_TABLE_SIZE) return LOG_FACTORIAL[k];
  const m = k + 1;
  const m2 = m * m;
  return (m - 0.5) * Math.log(m) - m + 0.9189385332046728 + (1 / 12 - (1 / 360 - 1 / (1260 * m2)) / m2) / m;
}

/** Means below this use the tables; at or above, PTRS. */
export const POISSON_TABLE_MAX = 64;
/** Tabulated means are multiples of 1/POISSON_QUANTA. */
export const POISSON_QUANTA = 4;
const QUANTA = POISSON_QUANTA;
const N_TABLES = POISSON_TABLE_MAX * QUANTA;

/** Tables of Poisson(q/QUANTA) for q = 1 … N_TABLES−1, built once per thread when the module loads. */
const TABLE_START = new Int32Array(N_TABLES);
const TABLE_LENGTH = new Int32Array(N_TABLES);
/** CDFs, concatenated; the last entry of each is 1. */
const CDF: Float64Array = (() => {
  let total = 0;
  for (let q = 1; q < N_TABLES; q++) {
    const mu = q / QUANTA;
    TABLE_START[q] = total;
    TABLE_LENGTH[q] = Math.ceil(mu + 12 * Math.sqrt(mu) + 20);
    total += TABLE_LENGTH[q];
  }
  const cdf = new Float64Array(total);
  for (let q = 1; q < N_TABLES; q++) {
    const mu = q / QUANTA;
    const s = TABLE_START[q];
    const n = TABLE_LENGTH[q];
    let p = Math.exp(-mu);
    let c = p;
    cdf[s] = c;
    for (let k = 1; k < n; k++) {
      p *= mu / k;
      c += p;
      cdf[s + k] = c;
    }
    // The omitted tail is below 1e−25; closing the table at 1 makes every uniform land in it.
    cdf[s + n - 1] = 1;
  }
  return cdf;
})();
/** Guide tables, same layout: GUIDE[start + i] = smallest k with CDF[start + k] > i/length. */
const GUIDE: Int32Array = (() => {
  const guide = new Int32Array(CDF.length);
  for (let q = 1; q < N_TABLES; q++) {
    const s = TABLE_START[q];
    const n = TABLE_LENGTH[q];
    let k = 0;
    for (let i = 0; i < n; i++) {
      while (CDF[s + k] <= i / n) k++;
      guide[s + i] = k;
    }
  }
  return guide;
})();

/**
 * The tables, for kernels that inline the table branch of `poisson` with their own copy of the
 * stream (ssa/tau-kernel.ts); they must follow it step for step (tests compare the two).
 */
export const POISSON_TABLES = { cdf: CDF, guide: GUIDE, start: TABLE_START, length: TABLE_LENGTH } as const;

/**
 * Poisson(δ) for 0 < δ < 1/QUANTA by sequential inversion of the uniform u, for u ≥ 1 − δ (below,
 * the answer is 0 and callers need not call).
 */
export function poissonRemainder(u: number, d: number): number {
  let p = Math.exp(-d);
  let c = p;
  let j = 0;
  while (u >= c && j < 40) {
    j++;
    p *= d / j;
    c += p;
  }
  return j;
}

/** One Poisson(mean) variate; 0 for mean ≤ 0. */
export function poisson(rng: CellRng, mean: number): number {
  if (!(mean > 0)) return 0;
  if (mean < POISSON_TABLE_MAX) {
    const q = Math.floor(mean * QUANTA);
    const d = mean - q / QUANTA;
    let k = 0;
    if (q > 0) {
      const s = TABLE_START[q];
      const u = rng.uniform();
      k = GUIDE[s + Math.floor(u * TABLE_LENGTH[q])];
      while (CDF[s + k] <= u) k++;
    }
    if (d > 0) {
      // Inversion of Poisson(δ); u < 1 − δ ≤ e^(−δ) settles the usual answer 0 without the exponential.
      const u = rng.uniform();
      if (u >= 1 - d) k += poissonRemainder(u, d);
    }
    return k;
  }
  const slam = Math.sqrt(mean);
  const b = 0.931 + 2.53 * slam;
  const a = -0.059 + 0.02483 * b;
  const vr = 0.9277 - 3.6224 / (b - 2);
  for (;;) {
    const U = rng.uniform() - 0.5;
    const V = rng.uniform();
    const us = 0.5 - Math.abs(U);
    const k = Math.floor(((2 * a) / us + b) * U + mean + 0.43);
    if (us >= 0.07 && V <= vr) return k;
    if (k < 0 || (us < 0.013 && V > us)) continue;
    const invalpha = 1.1239 + 1.1328 / (b - 3.4);
    if (Math.log(V) + Math.log(invalpha) - Math.log(a / (us * us) + b) <= -mean + k * Math.log(mean) - logFactorial(k)) return k;
  }
}
