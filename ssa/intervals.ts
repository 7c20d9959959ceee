/**
 * 95% intervals on every summary (issue 12, item 6): the stationary and final-time mean, SD, CV
 * and Fano factor of an ensemble each get a percentile-bootstrap interval over whole cells
 * (Efron & Tibshirani 1993, ch. 13), the comparisons' method (ssa/bootstrap.ts). Whole cells are
 * resampled because one cell's samples over time are correlated; at the final time each cell
 * gives one value, so its replicates resample the last grid point's histogram. The point numbers
 * of the summary are left as they are; the intervals sit beside them as `ci`. Seeded by the run's
 * seed on streams of their own, so a summary stays byte-identical for any threads and chunking.
 * Pure: no I/O.
 */
import { bootstrapNoise, bootstrapRng, type Interval } from "./bootstrap";
import { cellStatsOf } from "./cell-stats";
import { quantileSorted, type Partial } from "./stats";

/** Replicates of the summary's intervals (Efron & Tibshirani suggest at least 1000 for percentile intervals). */
export const SUMMARY_REPLICATES = 1000;
export const SUMMARY_LEVEL = 0.95;
export const SUMMARY_CI_METHOD = `percentile bootstrap over cells, ${SUMMARY_REPLICATES} replicates`;
/** Bootstrap streams of a run's summary, apart from the comparisons' (design positions and 1e6 + …). */
export const STATIONARY_STREAM = 2_000_000_001;
export const FINAL_STREAM = 2_000_000_002;

/** [lo, hi] of one statistic; NaN (JSON null) where undefined. */
export type Bounds = [number, number];

export interface MomentIntervals {
  mean: Bounds;
  sd: Bounds;
  cv: Bounds;
  fano: Bounds;
  level: number;
  method: string;
}

/** Intervals of an ensemble's period mean and CV (issue 12 item 6): time units, no amount scale. */
export interface PeriodIntervals {
  mean: Bounds;
  cv: Bounds;
  level: number;
  method: string;
}

/** The stationary moments' intervals of one species, with its period's from the same replicates. */
export interface StationaryIntervals extends MomentIntervals {
  period: PeriodIntervals;
}

const bounds = (iv: Interval, scale: number): Bounds => [iv.lo / scale, iv.hi / scale];
const undefinedIntervals = (method: string): MomentIntervals => ({ mean: [NaN, NaN], sd: [NaN, NaN], cv: [NaN, NaN], fano: [NaN, NaN], level: SUMMARY_LEVEL, method });
const undefinedStationary = (method: string): StationaryIntervals => ({
  ...undefinedIntervals(method), period: { mean: [NaN, NaN], cv: [NaN, NaN], level: SUMMARY_LEVEL, method },
});

export interface IntervalOptions {
  seed: number;
  /** Divides amounts (model units: Ω); Fano divides by it once, CV not at all. */
  scale?: number;
  replicates?: number;
}

/**
 * Intervals of the stationary moments of every species, from the partial's per-cell sums after
 * burn-in, and of its period mean and CV from the same replicates (each cell's periods move with
 * the cell, as in the comparisons). With fewer than 2 cells there is nothing to resample: the
 * bounds are NaN, as they are for the period of a species without periods.
 */
export function computeStationaryIntervals(partial: Partial, o: IntervalOptions): StationaryIntervals[] {
  const replicates = o.replicates ?? SUMMARY_REPLICATES;
  const method = `percentile bootstrap over cells, ${replicates} replicates`;
  if (partial.cells < 2) return Array.from({ length: partial.nSpecies }, () => undefinedStationary(method));
  const scale = o.scale ?? 1;
  const noise = bootstrapNoise(cellStatsOf(partial), { seed: o.seed, stream: STATIONARY_STREAM, replicates, level: SUMMARY_LEVEL });
  return noise.map((n) => ({
    mean: bounds(n.mean, scale), sd: bounds(n.sd, scale), cv: bounds(n.cv, 1), fano: bounds(n.fano, scale), level: SUMMARY_LEVEL, method,
    period: { mean: bounds(n.periodMean, 1), cv: bounds(n.periodCv, 1), level: SUMMARY_LEVEL, method },
  }));
}

/** Type-7 percentile interval of the finite values (NaN when none is). */
function percentileBounds(reps: Float64Array, scale: number): Bounds {
  const finite = reps.filter((v) => Number.isFinite(v)).sort();
  if (finite.length === 0) return [NaN, NaN];
  const a = (1 - SUMMARY_LEVEL) / 2;
  return [quantileSorted(finite, a) / scale, quantileSorted(finite, 1 - a) / scale];
}

/**
 * Intervals of the final-time moments of every species: each replicate draws `cells` values with
 * replacement from the last grid point's histogram (one value per cell). Variances with n − 1, as
 * in the summary.
 */
export function computeFinalIntervals(partial: Partial, o: IntervalOptions): MomentIntervals[] {
  const replicates = o.replicates ?? SUMMARY_REPLICATES;
  const method = `percentile bootstrap over cells, ${replicates} replicates`;
  const nS = partial.nSpecies;
  const n = partial.cells;
  if (n < 2) return Array.from({ length: nS }, () => undefinedIntervals(method));
  const scale = o.scale ?? 1;
  const rng = bootstrapRng(o.seed, FINAL_STREAM);
  const g = partial.nTimes - 1;
  // Each species' n final values in ascending order (the histogram expanded): a replicate then
  // reads values[rank] for n random ranks, with no search.
  const sorted = Array.from({ length: nS }, (_, s) => {
    const a = partial.histPtr[g * nS + s];
    const b = partial.histPtr[g * nS + s + 1];
    const out = new Float64Array(n);
    let at = 0;
    for (let k = a; k < b; k++) out.fill(partial.histValues[k], at, (at += partial.histCounts[k]));
    return out;
  });
  const reps = Array.from({ length: nS * 4 }, () => new Float64Array(replicates)); // [species][mean, sd, cv, fano]
  const picks = new Int32Array(n);
  for (let r = 0; r < replicates; r++) {
    // Ranks into each species' sorted values: each species' replicate is a valid draw of n cells
    // with replacement; ranks are not the same cells across species, which no interval here needs.
    for (let k = 0; k < n; k++) picks[k] = Math.floor(rng.uniform() * n);
    for (let s = 0; s < nS; s++) {
      const values = sorted[s];
      let sx = 0;
      let sxx = 0;
      for (let k = 0; k < n; k++) {
        const v = values[picks[k]];
        sx += v;
        sxx += v * v;
      }
      const mean = sx / n;
      const variance = Math.max(0, sxx - mean * sx) / (n - 1);
      const sd = Math.sqrt(variance);
      reps[s * 4][r] = mean;
      reps[s * 4 + 1][r] = sd;
      reps[s * 4 + 2][r] = mean !== 0 ? sd / mean : NaN;
      reps[s * 4 + 3][r] = mean !== 0 ? variance / mean : NaN;
    }
  }
  return sorted.map((_, s) => ({
    mean: percentileBounds(reps[s * 4], scale),
    sd: percentileBounds(reps[s * 4 + 1], scale),
    cv: percentileBounds(reps[s * 4 + 2], 1),
    fano: percentileBounds(reps[s * 4 + 3], scale),
    level: SUMMARY_LEVEL,
    method,
  }));
}
