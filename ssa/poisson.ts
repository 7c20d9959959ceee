/**
 * Poisson variates from a cell's uniform stream, for tau-leaping. Pure: no I/O.
 * - mean < 10: inversion by sequential search of the CDF (Devroye 1986, Non-Uniform Random
 *   Variate Generation, §X.3).
 * - mean ≥ 10: transformed rejection with squeeze, "PTRS" (Hörmann 1993, Insurance: Mathematics
 *   and Economics 12:39), with the constants of that paper.
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

/** One Poisson(mean) variate; 0 for mean ≤ 0. */
export function poisson(rng: CellRng, mean: number): number {
  if (!(mean > 0)) return 0;
  if (mean < 10) {
    const u = rng.uniform();
    let p = Math.exp(-mean);
    let s = p;
    let k = 0;
    // Tail mass below 1e-300 cannot hold u; the guard only stops round-off from looping.
    while (u >= s && k < 1000) {
      k++;
      p *= mean / k;
      s += p;
    }
    return k;
  }
  const slam = Math.sqrt(mean);
  const loglam = Math.log(mean);
  const b = 0.931 + 2.53 * slam;
  const a = -0.059 + 0.02483 * b;
  const invalpha = 1.1239 + 1.1328 / (b - 3.4);
  const vr = 0.9277 - 3.6224 / (b - 2);
  for (;;) {
    const U = rng.uniform() - 0.5;
    const V = rng.uniform();
    const us = 0.5 - Math.abs(U);
    const k = Math.floor(((2 * a) / us + b) * U + mean + 0.43);
    if (us >= 0.07 && V <= vr) return k;
    if (k < 0 || (us < 0.013 && V > us)) continue;
    if (Math.log(V) + Math.log(invalpha) - Math.log(a / (us * us) + b) <= -mean + k * loglam - logFactorial(k)) return k;
  }
}
