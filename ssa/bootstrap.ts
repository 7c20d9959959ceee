/**
 * Percentile-bootstrap confidence intervals over cells (Efron & Tibshirani 1993, An Introduction
 * to the Bootstrap, ch. 13) for an ensemble's stationary mean, SD, CV and Fano factor and its
 * period mean and period CV, and a bootstrap test of the difference in CV between two designs.
 *
 * Cells are independent; the samples of one cell over time are not, so whole cells are
 * resampled: a replicate draws `cells` cells with replacement and pools them by adding their
 * per-cell sums (ssa/cell-stats.ts), the same pooled definition as `stationary` and `period` in
 * the summary. Seeded (Tyche-i keyed by `burstwise-bootstrap:<seed>:<stream>`), so an interval is
 * reproducible. Pure: no I/O.
 */
import seedrandom from "seedrandom";

import type { CellStats } from "./cell-stats";
import { CellRng } from "./rng";
import { quantileSorted } from "./stats";

/** A point estimate with its percentile interval; NaN where undefined (e.g. the CV of a zero mean). */
export interface Interval {
  value: number;
  lo: number;
  hi: number;
}

export interface NoiseIntervals {
  mean: Interval;
  sd: Interval;
  cv: Interval;
  fano: Interval;
  periodMean: Interval;
  periodCv: Interval;
  /** Periods pooled over all cells (the point estimate's sample size). */
  periodCount: number;
}

export interface BootstrapOptions {
  seed: number;
  /** Separates the streams of several ensembles drawn with one seed (e.g. a design's position). */
  stream?: number;
  /** Replicates; default 2000 (Efron & Tibshirani suggest at least 1000 for percentile intervals). */
  replicates?: number;
  /** Coverage of the interval; default 0.95. */
  level?: number;
}

export const DEFAULT_REPLICATES = 2000;

/** Number of statistics pooled per species (mean, sd, cv, fano, period mean, period cv). */
const NSTAT = 6;

/**
 * The generator of a bootstrap stream: Tyche-i with its state keyed by ARC4 from
 * `burstwise-bootstrap:<seed>:<stream>` (apart from the cells' streams `burstwise:<seed>:<index>`).
 * @throws RangeError for a seed or stream that is not a non-negative safe integer.
 */
export function bootstrapRng(seed: number, stream = 0): CellRng {
  if (!Number.isSafeInteger(seed) || seed < 0) throw new RangeError(`seed must be a non-negative integer, got ${seed}`);
  if (!Number.isSafeInteger(stream) || stream < 0) throw new RangeError(`stream must be a non-negative integer, got ${stream}`);
  const key = seedrandom(`burstwise-bootstrap:${seed}:${stream}`);
  const s = new Int32Array(4);
  for (let i = 0; i < 4; i++) s[i] = key.int32();
  if ((s[0] | s[1] | s[2] | s[3]) === 0) s[3] = 1367130551; // Tyche-i's fixed point (probability 2^−128)
  return new CellRng(s);
}

/** Resampling weights: how often each of n cells is drawn in n draws with replacement. */
function drawWeights(rng: CellRng, w: Float64Array): void {
  const n = w.length;
  w.fill(0);
  for (let k = 0; k < n; k++) w[Math.floor(rng.uniform() * n)] += 1;
}

/**
 * Pooled statistics of species s over cells weighted by w (null: every cell once), written to
 * out[0..5] = mean, sd, cv, fano, period mean, period cv. Variances divide by n − 1, as in the
 * summary; sums of integer counts times integer weights are exact.
 */
function pooled(cs: CellStats, s: number, w: Float64Array | null, out: Float64Array, at: number): void {
  const n = cs.cells;
  const base = s * n;
  let cells = 0, sx = 0, sxx = 0, np = 0, sp = 0, spp = 0;
  for (let c = 0; c < n; c++) {
    const wc = w ? w[c] : 1;
    if (wc === 0) continue;
    cells += wc;
    sx += wc * cs.sum[base + c];
    sxx += wc * cs.sumSq[base + c];
    np += wc * cs.periodCount[base + c];
    sp += wc * cs.periodSum[base + c];
    spp += wc * cs.periodSumSq[base + c];
  }
  const N = cells * cs.samples;
  const mean = N > 0 ? sx / N : NaN;
  // Σ(x − x̄)² = Σx² − x̄·Σx; clamped at 0 against round-off when every sample is equal.
  const variance = N > 1 ? Math.max(0, sxx - mean * sx) / (N - 1) : N === 1 ? 0 : NaN;
  const sd = Math.sqrt(variance);
  out[at] = mean;
  out[at + 1] = sd;
  out[at + 2] = mean !== 0 ? sd / mean : NaN;
  out[at + 3] = mean !== 0 ? variance / mean : NaN;
  const pMean = np > 0 ? sp / np : NaN;
  const pVar = np > 1 ? Math.max(0, spp - pMean * sp) / (np - 1) : NaN;
  out[at + 4] = pMean;
  out[at + 5] = pMean > 0 ? Math.sqrt(pVar) / pMean : NaN;
}

function checkStats(cs: CellStats, name: string): void {
  if (!(cs.cells >= 1 && cs.samples >= 1)) throw new RangeError(`${name} needs at least one cell with samples`);
}

function checkOptions(o: BootstrapOptions): { replicates: number; level: number } {
  const replicates = o.replicates ?? DEFAULT_REPLICATES;
  const level = o.level ?? 0.95;
  if (!(Number.isSafeInteger(replicates) && replicates >= 10)) throw new RangeError(`replicates must be an integer >= 10, got ${replicates}`);
  if (!(level > 0 && level < 1)) throw new RangeError(`level must be in (0, 1), got ${level}`);
  return { replicates, level };
}

/** Type-7 percentile interval of the finite values among `reps` (NaN when none is finite). */
function percentile(reps: Float64Array, level: number): { lo: number; hi: number } {
  const finite = reps.filter((v) => Number.isFinite(v)).sort();
  if (finite.length === 0) return { lo: NaN, hi: NaN };
  const a = (1 - level) / 2;
  return { lo: quantileSorted(finite, a), hi: quantileSorted(finite, 1 - a) };
}

/** Point estimates of every species from all cells (no resampling): [species][mean, sd, cv, fano, period mean, period cv]. */
export function pooledStatistics(cs: CellStats): Float64Array[] {
  return Array.from({ length: cs.nSpecies }, (_, s) => {
    const out = new Float64Array(NSTAT);
    pooled(cs, s, null, out, 0);
    return out;
  });
}

/**
 * Point estimates and percentile-bootstrap intervals of every species of one ensemble. Every
 * replicate resamples cells once for all species, so species' intervals come from the same draws.
 * @throws RangeError for an empty ensemble or bad options.
 */
export function bootstrapNoise(cs: CellStats, o: BootstrapOptions): NoiseIntervals[] {
  checkStats(cs, "bootstrapNoise");
  const { replicates, level } = checkOptions(o);
  const rng = bootstrapRng(o.seed, o.stream ?? 0);
  const nS = cs.nSpecies;
  const reps = new Float64Array(replicates * nS * NSTAT); // [replicate][species][stat]
  const w = new Float64Array(cs.cells);
  for (let r = 0; r < replicates; r++) {
    drawWeights(rng, w);
    for (let s = 0; s < nS; s++) pooled(cs, s, w, reps, (r * nS + s) * NSTAT);
  }
  const point = pooledStatistics(cs);
  const column = new Float64Array(replicates);
  return point.map((pt, s) => {
    const iv = (k: number): Interval => {
      for (let r = 0; r < replicates; r++) column[r] = reps[(r * nS + s) * NSTAT + k];
      return { value: pt[k], ...percentile(column, level) };
    };
    let periodCount = 0;
    for (let c = 0; c < cs.cells; c++) periodCount += cs.periodCount[s * cs.cells + c];
    return { mean: iv(0), sd: iv(1), cv: iv(2), fano: iv(3), periodMean: iv(4), periodCv: iv(5), periodCount };
  });
}

export interface DifferenceTest {
  /** Estimate of B − A from all cells. */
  difference: number;
  /** Percentile interval of B − A. */
  lo: number;
  hi: number;
  /**
   * Two-sided bootstrap p-value for "no difference": twice the smaller share of replicates on
   * either side of 0, (count + 1)/(replicates + 1), at most 1 (the smallest 1 − level at which the
   * percentile interval excludes 0).
   */
  pValue: number;
  /** Share of replicates in which B's value is below A's. */
  shareBLower: number;
  /** Replicates with both values defined. */
  replicates: number;
}

export interface CompareOptions extends BootstrapOptions {
  /**
   * Resample the same cell indices in both (common random numbers: cell k of A and of B share a
   * stream, so they are pairs). Needs equal cell counts.
   */
  paired?: boolean;
}

/**
 * Bootstrap test of the difference in CV and in period CV of one species between designs A and
 * B (Efron & Tibshirani 1993, ch. 16): each replicate resamples A's cells and B's cells (the same
 * indices when paired) and takes B − A. `periodCv` is null when either design has no periods.
 * @throws RangeError for empty ensembles, a species index out of range, or unequal cell counts when paired.
 */
export function compareCv(a: CellStats, speciesA: number, b: CellStats, speciesB: number, o: CompareOptions): { cv: DifferenceTest; periodCv: DifferenceTest | null } {
  checkStats(a, "compareCv (A)");
  checkStats(b, "compareCv (B)");
  if (!(speciesA >= 0 && speciesA < a.nSpecies)) throw new RangeError(`speciesA must be in [0, ${a.nSpecies}), got ${speciesA}`);
  if (!(speciesB >= 0 && speciesB < b.nSpecies)) throw new RangeError(`speciesB must be in [0, ${b.nSpecies}), got ${speciesB}`);
  if (o.paired && a.cells !== b.cells) throw new RangeError(`paired: A has ${a.cells} cells and B ${b.cells}`);
  const { replicates, level } = checkOptions(o);
  const rngA = bootstrapRng(o.seed, o.stream ?? 0);
  const rngB = o.paired ? rngA : bootstrapRng(o.seed, (o.stream ?? 0) + 1);
  const wa = new Float64Array(a.cells);
  const wb = o.paired ? wa : new Float64Array(b.cells);
  const sa = new Float64Array(NSTAT);
  const sb = new Float64Array(NSTAT);
  const dCv = new Float64Array(replicates);
  const dPcv = new Float64Array(replicates);
  for (let r = 0; r < replicates; r++) {
    drawWeights(rngA, wa);
    if (!o.paired) drawWeights(rngB, wb);
    pooled(a, speciesA, wa, sa, 0);
    pooled(b, speciesB, wb, sb, 0);
    dCv[r] = sb[2] - sa[2];
    dPcv[r] = sb[5] - sa[5];
  }
  pooled(a, speciesA, null, sa, 0);
  pooled(b, speciesB, null, sb, 0);
  const test = (reps: Float64Array, estimate: number): DifferenceTest => {
    let below = 0, above = 0, lower = 0, valid = 0;
    for (const d of reps) {
      if (!Number.isFinite(d)) continue;
      valid++;
      if (d <= 0) below++;
      if (d >= 0) above++;
      if (d < 0) lower++;
    }
    const { lo, hi } = percentile(reps, level);
    const pValue = valid ? Math.min(1, (2 * (Math.min(below, above) + 1)) / (valid + 1)) : NaN;
    return { difference: estimate, lo, hi, pValue, shareBLower: valid ? lower / valid : NaN, replicates: valid };
  };
  const cv = test(dCv, sb[2] - sa[2]);
  const hasPeriods = Number.isFinite(sa[5]) && Number.isFinite(sb[5]);
  return { cv, periodCv: hasPeriods ? test(dPcv, sb[5] - sa[5]) : null };
}
