/**
 * Ensemble statistics that merge exactly: a chunk of cells becomes a `Partial` (per grid point and
 * species, a sparse histogram of integer counts; per cell, its oscillation periods and amplitudes in
 * cell order), partials merge in any order to the same value, and `finalizeSummary` reads means,
 * SDs, quantiles, final and stationary moments and period statistics from the merged partial in a
 * fixed order. So the output bytes never depend on threads or chunking (SCIENCE.md "Engineering
 * notes"). Pure: no I/O.
 */

import type { MomentIntervals, PeriodIntervals } from "./intervals";
import type { FiredChange } from "./schedule";
import { acfVerdict, mergeAcfSums, MIN_SAMPLES_PER_PERIOD, type AcfEvidence, type AcfSums } from "./oscillation";
import type { BurnInSource } from "./stationarity";
import { makeWarning, type EngineWarning } from "./warnings";

export const PARTIAL_FORMAT = "burstwise.partial/1" as const;

/** Periods and amplitudes of one species for a contiguous range of cells, in cell order. */
export interface CellSeriesList {
  /** cellPtr[k]..cellPtr[k+1] index the entries of cell first + k. */
  cellPtr: Float64Array;
  periods: Float64Array;
  amplitudes: Float64Array;
  /**
   * Per cell k, Σx and Σx² of its samples at grid times ≥ burn-in (the samples `stationary`
   * pools; `Partial.cellSamples` of them per cell). Integer counts, so both are exact in float64
   * while Σx² < 2^53 (e.g. counts up to 10^5 over 9 × 10^5 samples). Present when the partial
   * came from simulateCells; the bootstrap over cells reads them (ssa/cell-stats.ts).
   */
  sum?: Float64Array;
  sumSq?: Float64Array;
  /** Per cell, Σx over the first and over the last half of the window (ssa/stationarity.ts drift check). */
  sumHead?: Float64Array;
  sumTail?: Float64Array;
}

export interface PeriodSegment {
  first: number;
  last: number;
  species: CellSeriesList[];
  /**
   * What the schedule did in each cell (circuits with a schedule): per cell c and schedule entry
   * e, the time it first fired, firstAt[c·E + e] (NaN: never), and how many times, count[c·E + e].
   */
  schedule?: { firstAt: Float64Array; count: Float64Array };
}

/**
 * Serializable partial result of cells [first, last) of an ensemble (structured-clone safe:
 * numbers, strings and typed arrays only).
 */
export interface Partial {
  format: typeof PARTIAL_FORMAT;
  nSpecies: number;
  nTimes: number;
  cells: number;
  events: number;
  /** Sparse histograms per point p = g·nSpecies + i: values[ptr[p]..ptr[p+1]) ascending, with counts. */
  histPtr: Float64Array;
  histValues: Float64Array;
  histCounts: Float64Array;
  /** Cell ranges in ascending order, contiguous ranges joined. */
  segments: PeriodSegment[];
  /** Samples per cell behind `CellSeriesList.sum` (grid times ≥ burn-in); absent without per-cell sums. */
  cellSamples?: number;
  /** Exact lag sums for the averaged autocorrelation (ssa/oscillation.ts); absent in partials made before it. */
  acf?: AcfSums;
}

/** A Partial without its histograms: what a chunk gives when its samples went into a shared accumulator (ssa/histogram-accumulator.ts). */
export type CellsPart = Omit<Partial, keyof HistogramCSR>;

/** Sparse histograms of every grid point in CSR form (see Partial). */
export interface HistogramCSR {
  histPtr: Float64Array;
  histValues: Float64Array;
  histCounts: Float64Array;
}

/** Samples up to which sortSamples inserts instead of counting (counting costs O(range) too). */
const SMALL_SORT = 24;
/** Widest value range (max − min) that sortSamples counts instead of comparing. */
const MAX_COUNTING_RANGE = 1 << 16;
// Counting scratch, grown on demand and reused (one per thread; the engine is synchronous).
let countScratch = new Int32Array(1024);

/**
 * dst[dOff … dOff + n) = the n samples src[off + k·stride], k < n, in ascending order: the same
 * values as copying them and calling Float64Array sort (a −0 among integers comes back as 0). Sampled molecule counts are small
 * non-negative integers, so they are counted (O(n + range)) instead of compared (O(n log n));
 * anything else (fractions, negatives, a wide range) is copied and sorted. src and dst may be the
 * same contiguous segment (stride 1, dOff = off): every sample is read before any is written.
 */
export function sortSamples(src: Float64Array, off: number, stride: number, n: number, dst: Float64Array, dOff: number): void {
  if (n <= SMALL_SORT) {
    // A few samples (a short block's cells at one grid point): insertion sort beats both.
    for (let k = 0, i = off; k < n; k++, i += stride) {
      const v = src[i];
      let j = dOff + k - 1;
      while (j >= dOff && dst[j] > v) {
        dst[j + 1] = dst[j];
        j--;
      }
      dst[j + 1] = v;
    }
    return;
  }
  let lo = Infinity;
  let hi = -Infinity;
  let integral = true;
  for (let k = 0, i = off; k < n; k++, i += stride) {
    const v = src[i];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
    if (!(v >= 0 && v === Math.floor(v))) integral = false;
  }
  if (n === 0) return;
  if (!integral || hi - lo > MAX_COUNTING_RANGE) {
    for (let k = 0, i = off; k < n; k++, i += stride) dst[dOff + k] = src[i];
    dst.subarray(dOff, dOff + n).sort();
    return;
  }
  const range = hi - lo + 1;
  if (countScratch.length < range) countScratch = new Int32Array(Math.max(range, 2 * countScratch.length));
  const c = countScratch;
  for (let k = 0, i = off; k < n; k++, i += stride) c[src[i] - lo]++;
  let at = dOff;
  for (let v = 0; v < range; v++) {
    let m = c[v];
    if (m === 0) continue;
    c[v] = 0; // leave the scratch zeroed for the next call
    const value = v + lo;
    while (m-- > 0) dst[at++] = value;
  }
}

/**
 * Histograms of a block of samples: point p's nb values sit at block[p·stride .. p·stride + nb).
 * Sorts those segments in place, then counts distinct values and fills an exact-size CSR.
 */
export function histogramsOfBlock(block: Float64Array, nPoints: number, stride: number, nb: number): HistogramCSR {
  const histPtr = new Float64Array(nPoints + 1);
  for (let p = 0; p < nPoints; p++) {
    const base = p * stride;
    sortSamples(block, base, 1, nb, block, base);
    let distinct = nb > 0 ? 1 : 0;
    for (let k = 1; k < nb; k++) if (block[base + k] !== block[base + k - 1]) distinct++;
    histPtr[p + 1] = histPtr[p] + distinct;
  }
  const histValues = new Float64Array(histPtr[nPoints]);
  const histCounts = new Float64Array(histPtr[nPoints]);
  for (let p = 0; p < nPoints; p++) {
    let at = histPtr[p] - 1;
    const base = p * stride;
    for (let k = 0; k < nb; k++) {
      const v = block[base + k];
      if (k > 0 && v === block[base + k - 1]) histCounts[at] += 1;
      else {
        at++;
        histValues[at] = v;
        histCounts[at] = 1;
      }
    }
  }
  return { histPtr, histValues, histCounts };
}

/** Merges two CSR histogram sets point by point (exact: integer counts add), sizing the result exactly. */
export function mergeHistograms(a: HistogramCSR, b: HistogramCSR, nPoints: number): HistogramCSR {
  const av = a.histValues;
  const bv = b.histValues;
  const histPtr = new Float64Array(nPoints + 1);
  for (let p = 0; p < nPoints; p++) {
    let i = a.histPtr[p];
    let j = b.histPtr[p];
    const ie = a.histPtr[p + 1];
    const je = b.histPtr[p + 1];
    let n = 0;
    while (i < ie && j < je) {
      if (av[i] < bv[j]) i++;
      else if (bv[j] < av[i]) j++;
      else {
        i++;
        j++;
      }
      n++;
    }
    histPtr[p + 1] = histPtr[p] + n + (ie - i) + (je - j);
  }
  const histValues = new Float64Array(histPtr[nPoints]);
  const histCounts = new Float64Array(histPtr[nPoints]);
  const ac = a.histCounts;
  const bc = b.histCounts;
  let k = 0;
  for (let p = 0; p < nPoints; p++) {
    let i = a.histPtr[p];
    let j = b.histPtr[p];
    const ie = a.histPtr[p + 1];
    const je = b.histPtr[p + 1];
    while (i < ie && j < je) {
      if (av[i] < bv[j]) {
        histValues[k] = av[i];
        histCounts[k++] = ac[i++];
      } else if (bv[j] < av[i]) {
        histValues[k] = bv[j];
        histCounts[k++] = bc[j++];
      } else {
        histValues[k] = av[i];
        histCounts[k++] = ac[i++] + bc[j++];
      }
    }
    while (i < ie) {
      histValues[k] = av[i];
      histCounts[k++] = ac[i++];
    }
    while (j < je) {
      histValues[k] = bv[j];
      histCounts[k++] = bc[j++];
    }
  }
  return { histPtr, histValues, histCounts };
}

function concatF64(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length + b.length);
  out.set(a, 0);
  out.set(b, a.length);
  return out;
}

/** Concatenation of the arrays `pick` gives for each list, or undefined when any list lacks one. */
function concatAll(lists: CellSeriesList[], pick: (l: CellSeriesList) => Float64Array | undefined): Float64Array | undefined {
  let n = 0;
  for (const l of lists) {
    const a = pick(l);
    if (!a) return undefined;
    n += a.length;
  }
  const out = new Float64Array(n);
  let at = 0;
  for (const l of lists) {
    const a = pick(l) as Float64Array;
    out.set(a, at);
    at += a.length;
  }
  return out;
}

/** One segment of contiguous segments in cell order, each array copied once (joining pairwise would copy the growing front again for every segment). */
export function joinRun(run: PeriodSegment[]): PeriodSegment {
  return {
    first: run[0].first,
    last: run[run.length - 1].last,
    species: run[0].species.map((_, i) => {
      const lists = run.map((sg) => sg.species[i]);
      const cells = lists.reduce((n, l) => n + l.cellPtr.length - 1, 0);
      const ptr = new Float64Array(cells + 1);
      let at = 0;
      let base = 0;
      for (const l of lists) {
        for (let k = 1; k < l.cellPtr.length; k++) ptr[at + k] = base + l.cellPtr[k];
        at += l.cellPtr.length - 1;
        base += l.cellPtr[l.cellPtr.length - 1];
      }
      const joined: CellSeriesList = { cellPtr: ptr, periods: concatAll(lists, (l) => l.periods) as Float64Array, amplitudes: concatAll(lists, (l) => l.amplitudes) as Float64Array };
      // Per-cell sums survive a join only when every side carries them (cell order is kept).
      const sum = concatAll(lists, (l) => l.sum);
      const sumSq = concatAll(lists, (l) => l.sumSq);
      if (sum && sumSq) {
        joined.sum = sum;
        joined.sumSq = sumSq;
      }
      const sumHead = concatAll(lists, (l) => l.sumHead);
      const sumTail = concatAll(lists, (l) => l.sumTail);
      if (sumHead && sumTail) {
        joined.sumHead = sumHead;
        joined.sumTail = sumTail;
      }
      return joined;
    }),
    ...joinSchedules(run),
  };
}

/** The schedule records of contiguous segments joined in cell order, when every one has them. */
function joinSchedules(run: PeriodSegment[]): Pick<PeriodSegment, "schedule"> {
  if (!run.every((sg) => sg.schedule)) return {};
  const cat = (pick: (r: NonNullable<PeriodSegment["schedule"]>) => Float64Array) => {
    const parts = run.map((sg) => pick(sg.schedule as NonNullable<PeriodSegment["schedule"]>));
    const out = new Float64Array(parts.reduce((n, a) => n + a.length, 0));
    let at = 0;
    for (const a of parts) {
      out.set(a, at);
      at += a.length;
    }
    return out;
  };
  return { schedule: { firstAt: cat((r) => r.firstAt), count: cat((r) => r.count) } };
}

/**
 * Merges two partials of the same run covering disjoint cell ranges. Exact and order-independent:
 * mergePartials(a, b) and mergePartials(b, a) are equal, and so is any bracketing of three.
 * @throws RangeError when shapes differ or cell ranges overlap.
 */
export function mergePartials(a: Partial, b: Partial): Partial {
  const part = mergeCellParts(a, b);
  return withHistograms(part, mergeHistograms(a, b, a.nSpecies * a.nTimes));
}

/** mergePartials of everything but the histograms (the same checks, the same order-independence). */
export function mergeCellParts(a: CellsPart, b: CellsPart): CellsPart {
  if (a.nSpecies !== b.nSpecies || a.nTimes !== b.nTimes) throw new RangeError("mergePartials: partials of different shapes");
  const segments = joinContiguous([...a.segments, ...b.segments]);
  const merged: CellsPart = {
    format: PARTIAL_FORMAT,
    nSpecies: a.nSpecies,
    nTimes: a.nTimes,
    cells: a.cells + b.cells,
    events: a.events + b.events,
    segments,
  };
  if (a.cellSamples !== undefined && a.cellSamples === b.cellSamples) merged.cellSamples = a.cellSamples;
  if (a.acf && b.acf) merged.acf = mergeAcfSums(a.acf, b.acf);
  return merged;
}

/** Segments sorted by first cell, each contiguous run joined into one. @throws RangeError when two overlap. */
function joinContiguous(segments: PeriodSegment[]): PeriodSegment[] {
  const all = [...segments].sort((x, y) => x.first - y.first);
  const out: PeriodSegment[] = [];
  let run: PeriodSegment[] = [];
  for (const s of all) {
    const prev = run[run.length - 1];
    if (prev && s.first < prev.last) throw new RangeError(`mergePartials: cell ranges overlap at cell ${s.first}`);
    if (prev && prev.last !== s.first) {
      out.push(run.length === 1 ? run[0] : joinRun(run));
      run = [];
    }
    run.push(s);
  }
  if (run.length) out.push(run.length === 1 ? run[0] : joinRun(run));
  return out;
}

/** mergeCellParts of many parts at once: each contiguous run of cells is copied once. @throws RangeError as mergeCellParts. */
export function mergeCellPartsAll(parts: CellsPart[]): CellsPart {
  const first = parts[0];
  for (const b of parts) {
    if (first.nSpecies !== b.nSpecies || first.nTimes !== b.nTimes) throw new RangeError("mergePartials: partials of different shapes");
  }
  const segments = joinContiguous(parts.flatMap((p) => p.segments));
  const merged: CellsPart = {
    format: PARTIAL_FORMAT,
    nSpecies: first.nSpecies,
    nTimes: first.nTimes,
    cells: parts.reduce((n, p) => n + p.cells, 0),
    events: parts.reduce((n, p) => n + p.events, 0),
    segments,
  };
  const samples = parts[0].cellSamples;
  if (samples !== undefined && parts.every((p) => p.cellSamples === samples)) merged.cellSamples = samples;
  if (parts.every((p) => p.acf)) {
    let acf = parts[0].acf as AcfSums;
    for (let k = 1; k < parts.length; k++) acf = mergeAcfSums(acf, parts[k].acf as AcfSums);
    merged.acf = acf;
  }
  return merged;
}

/** The Partial of `part` and its histograms, fields in the order a Partial always has them (its serialized bytes do not depend on how it was made). */
export function withHistograms(part: CellsPart, hist: HistogramCSR): Partial {
  const { format, nSpecies, nTimes, cells, events, segments, cellSamples, acf } = part;
  const p: Partial = { format, nSpecies, nTimes, cells, events, histPtr: hist.histPtr, histValues: hist.histValues, histCounts: hist.histCounts, segments };
  if (cellSamples !== undefined) p.cellSamples = cellSamples;
  if (acf !== undefined) p.acf = acf;
  return p;
}

/** Sample quantile, linear interpolation between order statistics (Hyndman & Fan 1996, type 7; R's default). */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** Type-7 quantile of a sparse histogram (ascending values with counts); total = Σ counts. */
export function quantileSparse(values: Float64Array, counts: Float64Array, total: number, p: number): number {
  if (total === 0) return NaN;
  const h = (total - 1) * p;
  const lo = Math.floor(h);
  const frac = h - lo;
  // value of the order statistic k (0-based)
  let k = 0;
  let cum = 0;
  while (cum + counts[k] <= lo) cum += counts[k++];
  const vLo = values[k];
  if (frac === 0) return vLo;
  const vHi = cum + counts[k] > lo + 1 ? vLo : values[Math.min(k + 1, values.length - 1)];
  return vLo + frac * (vHi - vLo);
}

export interface Moments {
  n: number;
  mean: number;
  /** Sample variance (n − 1); 0 when n < 2. */
  variance: number;
}

/**
 * Mean and sample variance of a union of sparse histograms, two passes in a fixed order
 * (the mean first, then Σ c·(v − mean)²), so the result depends only on the histograms.
 */
export function sparseMoments(ranges: { values: Float64Array; counts: Float64Array }[]): Moments {
  let n = 0;
  let sum = 0;
  for (const r of ranges) for (let k = 0; k < r.values.length; k++) {
    n += r.counts[k];
    sum += r.counts[k] * r.values[k];
  }
  if (n === 0) return { n: 0, mean: NaN, variance: NaN };
  const mean = sum / n;
  let ss = 0;
  for (const r of ranges) for (let k = 0; k < r.values.length; k++) {
    const d = r.values[k] - mean;
    ss += r.counts[k] * d * d;
  }
  return { n, mean, variance: n > 1 ? ss / (n - 1) : 0 };
}

/**
 * Quantiles of a cell's own samples (after burn-in) that bound its hysteresis band. Measured here
 * on the ring timer at 10 fL (50 cells, dt 0.5): with the quartiles, noisy peaks that stay under
 * the upper quartile drop a cycle (up to 3.6% of intervals at twice the period, +4% on the mean);
 * with the 40th/60th percentiles the mean period of every species is within 0.4% of the mean-field
 * limit cycle (20.81 min), and non-oscillating species still cross at irregular intervals.
 */
export const BAND_LOW_QUANTILE = 0.4;
export const BAND_HIGH_QUANTILE = 0.6;

/**
 * Upward crossings of one cell's sampled path with a hysteresis band (SCIENCE.md "Period of a noisy
 * oscillator"): the band runs from the cell's own 40th to 60th percentile after burn-in (at least
 * `minBand` wide, else the cell has no periods); a crossing is counted when the path reaches the
 * upper level after having been at or below the lower one, at the time found by linear
 * interpolation between the two samples around it. Successive crossings give periods; half the
 * peak-to-trough range between them gives the cycle's amplitude.
 * Appends to `periods` / `amplitudes` and returns how many were added.
 * `scratch` needs room for the samples after burn-in.
 */
export function cellPeriods(
  y: Float64Array,
  offset: number,
  stride: number,
  times: Float64Array,
  gStart: number,
  nTimes: number,
  minBand: number,
  scratch: Float64Array,
  periods: number[],
  amplitudes: number[],
): number {
  const n = nTimes - gStart;
  if (n < 4) return 0;
  sortSamples(y, offset + gStart * stride, stride, n, scratch, 0);
  const s = scratch.subarray(0, n);
  const low = quantileSorted(s, BAND_LOW_QUANTILE);
  const high = quantileSorted(s, BAND_HIGH_QUANTILE);
  if (!(high - low >= minBand)) return 0;
  let armed = false;
  let last = NaN;
  let vmax = -Infinity;
  let vmin = Infinity;
  let added = 0;
  let prev = y[offset + gStart * stride];
  for (let g = gStart; g < nTimes; g++) {
    const v = y[offset + g * stride];
    if (v > vmax) vmax = v;
    if (v < vmin) vmin = v;
    if (v <= low) armed = true;
    else if (armed && v >= high) {
      const t0 = times[g - 1];
      const tc = t0 + ((times[g] - t0) * (high - prev)) / (v - prev);
      if (last === last) {
        periods.push(tc - last);
        amplitudes.push((vmax - vmin) / 2);
        added++;
      }
      last = tc;
      armed = false;
      vmax = v;
      vmin = v;
    }
    prev = v;
  }
  return added;
}

/**
 * Σx and Σx² of one cell's samples at grid points gStart … nTimes − 1 (y[offset + g·stride]),
 * added in grid order. With integer counts both sums are exact, so they merge in any order.
 * Writes them to out[0] and out[1].
 */
export function cellSampleSums(y: Float64Array, offset: number, stride: number, gStart: number, nTimes: number, out: Float64Array): void {
  let s = 0;
  let ss = 0;
  for (let g = gStart; g < nTimes; g++) {
    const v = y[offset + g * stride];
    s += v;
    ss += v * v;
  }
  out[0] = s;
  out[1] = ss;
}

export interface SpeciesMoments {
  mean: number;
  variance: number;
  cv: number;
  fano: number;
  /** 95% intervals over cells (ssa/intervals.ts); ensembles only. */
  ci?: MomentIntervals;
}

export interface PeriodSummary {
  count: number;
  mean: number;
  sd: number;
  cv: number;
  histogram: { edges: number[]; counts: number[] };
  /** Cells that contributed at least one period. */
  cells: number;
  /** Half the peak-to-trough range per cycle, in the output's amount units. */
  amplitude: { mean: number; sd: number };
  /**
   * The verdict: a period is reported (count > 0) exactly when this is true. Ensembles decide by
   * the autocorrelation test (`acf`); the mean-field trace by a sustained cycle (`trend`).
   */
  oscillating: boolean;
  /** All measured crossing intervals, whether or not they count as periods (evidence only, never a period). */
  crossings: { count: number; mean: number; cv: number };
  /** The null-model test behind the verdict of an ensemble (ssa/oscillation.ts). */
  acf?: AcfEvidence;
  /** 2.5th and 97.5th percentiles of the cells' own mean periods (cells with ≥ 1 period); when oscillating. */
  interval?: [number, number] | null;
  /** 95% intervals of `mean` and `cv` over cells (ssa/intervals.ts); ensembles, where a period is reported. */
  ci?: PeriodIntervals;
  /** Mean-field trace only: the fitted decay of the cycle amplitude over the last half of its cycles. */
  trend?: { damping_time: number | null; ratio: number; cycles: number; sustained: boolean };
  /** Why a period that the test found is not reported (e.g. `grid-too-coarse`, `damped-oscillation`). */
  withheld?: string;
}

/**
 * The old verdict, kept only for partials stored before the autocorrelation test (no `acf`):
 * crossing intervals counted as periods when their CV across the ensemble was below this. It sits
 * at the noise floor (independent samples give interval CV² ≥ 0.25; issue 12), which is why the
 * verdict is now the null-model test of ssa/oscillation.ts. Measured here then (100 cells, dt 1): fluctuations without a rhythm (birth–death, both
 * species of the two-stage reporter) cross the band at intervals with CV 0.74–0.81, close to a
 * renewal process; the ring timer gives 0.21–0.26 at 1 fL and 0.07–0.08 at 10 fL.
 */
export const PERIOD_CV_LIMIT = 0.5;
/** Fewest crossing intervals that can establish a rhythm. */
export const PERIOD_MIN_COUNT = 3;

/**
 * Period statistics from crossing intervals and amplitudes in cell order (scale divides amplitudes).
 * `verdict` decides whether they are reported; without one, the older regularity rule
 * (PERIOD_CV_LIMIT) decides, for partials stored before the autocorrelation test.
 */
export function periodSummary(periods: Float64Array, amps: Float64Array, cells: number, scale: number, verdict?: boolean): PeriodSummary {
  const pm = meanSd(periods);
  const cv = pm.mean > 0 ? pm.sd / pm.mean : NaN;
  const oscillating = periods.length >= PERIOD_MIN_COUNT && (verdict ?? cv < PERIOD_CV_LIMIT);
  const crossings = { count: periods.length, mean: pm.mean, cv };
  if (!oscillating) return withheldPeriod({ crossings } as PeriodSummary);
  const am = meanSd(amps);
  return {
    count: periods.length,
    mean: pm.mean,
    sd: pm.sd,
    cv,
    histogram: equalWidthHistogram(periods),
    cells,
    amplitude: { mean: am.mean / scale, sd: am.sd / scale },
    oscillating,
    crossings,
  };
}

/** The period entry with no period reported: count 0, statistics NaN; the evidence fields are kept. */
export function withheldPeriod(p: PeriodSummary, reason?: string): PeriodSummary {
  const out: PeriodSummary = {
    count: 0,
    mean: NaN,
    sd: NaN,
    cv: NaN,
    histogram: { edges: [], counts: [] },
    cells: 0,
    amplitude: { mean: NaN, sd: NaN },
    oscillating: false,
    crossings: p.crossings,
  };
  if (p.acf) out.acf = p.acf;
  if (p.trend) out.trend = p.trend;
  if (reason) out.withheld = reason;
  return out;
}

/** 2.5th and 97.5th percentiles (type 7) of per-cell mean periods; null with fewer than 2 cells. */
export function cellPeriodInterval(cellPtr: ArrayLike<number>[], periods: ArrayLike<number>[]): [number, number] | null {
  const means: number[] = [];
  cellPtr.forEach((ptr, s) => {
    for (let c = 0; c + 1 < ptr.length; c++) {
      const a = ptr[c];
      const b = ptr[c + 1];
      if (b <= a) continue;
      let sum = 0;
      for (let k = a; k < b; k++) sum += periods[s][k];
      means.push(sum / (b - a));
    }
  });
  if (means.length < 2) return null;
  means.sort((x, y) => x - y);
  return [quantileSorted(means, 0.025), quantileSorted(means, 0.975)];
}

export interface SimulateSummary {
  method: "ssa" | "tau" | "ode";
  seed: number | null;
  runs: number;
  units: "molecules" | "model";
  species: string[];
  times: number[];
  mean: Record<string, number[]>;
  sd: Record<string, number[]>;
  quantiles: Record<string, { p05: number[]; p25: number[]; p50: number[]; p75: number[]; p95: number[] }>;
  final: Record<string, SpeciesMoments>;
  stationary: Record<string, SpeciesMoments>;
  period: Record<string, PeriodSummary>;
  /**
   * The pooled distribution behind `stationary`: every distinct amount seen after burn-in (in
   * the output units) with how many (cell, grid time) samples had it, ascending.
   */
  stationary_distribution?: Record<string, { values: number[]; counts: number[] }>;
  events: number;
  wall_s: number;
  events_per_s: number;
  /** ε of the tau-leaping step selection (method "tau" only). */
  tau_epsilon?: number;
  burn_in: number;
  /** Where the burn-in came from and the circuit's slowest relaxation time (ssa/stationarity.ts). */
  burn_in_rule?: { source: BurnInSource; relaxation_time: number | null; relaxation_times: number };
  time_unit: string;
  amount_unit: string;
  omega: number;
  trace?: Record<string, number[]>;
  /** The circuit's scheduled changes that fired within [0, t_end] (ssa/schedule.ts); absent without a schedule. */
  schedule?: FiredChange[];
  /** Caveats on these numbers (ssa/warnings.ts), e.g. `grid-too-coarse`, `damped-oscillation`, `quasi-cycles`,
   * `not-stationary`, `window-too-short`. */
  warnings: EngineWarning[];
}

export interface FinalizeOptions {
  method: "ssa" | "tau";
  seed: number;
  units: "molecules" | "model";
  species: string[];
  times: Float64Array | number[];
  burnIn: number;
  omega: number;
  timeUnit: string;
  amountUnit: string;
  wallS: number;
  /** ε used by method "tau" (reported in the summary). */
  tauEpsilon?: number;
}

function momentsOut(m: Moments, scale: number): SpeciesMoments {
  // Counts → output units: amounts divide by scale, variances by scale², so Fano divides by scale.
  const mean = m.mean / scale;
  const variance = m.variance / (scale * scale);
  const sd = Math.sqrt(variance);
  return { mean, variance, cv: mean !== 0 ? sd / mean : NaN, fano: mean !== 0 ? variance / mean : NaN };
}

/** Equal-width histogram over [min, max] with ⌈√n⌉ bins (at most 50), the last bin closed. */
export function equalWidthHistogram(values: Float64Array): { edges: number[]; counts: number[] } {
  const n = values.length;
  if (n === 0) return { edges: [], counts: [] };
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < n; k++) {
    if (values[k] < lo) lo = values[k];
    if (values[k] > hi) hi = values[k];
  }
  if (hi === lo) return { edges: [lo, hi], counts: [n] };
  const bins = Math.max(1, Math.min(50, Math.ceil(Math.sqrt(n))));
  const w = (hi - lo) / bins;
  const edges = Array.from({ length: bins + 1 }, (_, b) => (b === bins ? hi : lo + b * w));
  const counts = new Array<number>(bins).fill(0);
  for (let k = 0; k < n; k++) counts[Math.min(bins - 1, Math.floor((values[k] - lo) / w))]++;
  return { edges, counts };
}

/** Mean and sample SD (n − 1; 0 for one value, NaN for none), summed in array order. */
export function meanSd(values: Float64Array): { mean: number; sd: number } {
  const n = values.length;
  if (n === 0) return { mean: NaN, sd: NaN };
  let s = 0;
  for (let k = 0; k < n; k++) s += values[k];
  const mean = s / n;
  let ss = 0;
  for (let k = 0; k < n; k++) ss += (values[k] - mean) * (values[k] - mean);
  return { mean, sd: n > 1 ? Math.sqrt(ss / (n - 1)) : 0 };
}

/**
 * The `simulate` JSON of CONTRACT.md §2 from a merged partial covering all runs.
 * Values are in molecules, or divided by Ω for `units: "model"`. Undefined ratios (CV or Fano of a
 * zero mean, period statistics with no periods) are NaN, which JSON writes as null.
 * @throws RangeError when the partial's shape does not match the options.
 */
export function finalizeSummary(partial: Partial, o: FinalizeOptions): SimulateSummary {
  const nS = partial.nSpecies;
  const nT = partial.nTimes;
  if (o.species.length !== nS || o.times.length !== nT) throw new RangeError("finalizeSummary: options do not match the partial");
  const scale = o.units === "model" ? o.omega : 1;
  const times = Array.from(o.times);
  const point = (g: number, i: number) => {
    const p = g * nS + i;
    const a = partial.histPtr[p];
    const b = partial.histPtr[p + 1];
    return { values: partial.histValues.subarray(a, b), counts: partial.histCounts.subarray(a, b) };
  };
  let gStart = 0;
  while (gStart < nT - 1 && times[gStart] < o.burnIn) gStart++;

  const mean: Record<string, number[]> = {};
  const sd: Record<string, number[]> = {};
  const quantiles: SimulateSummary["quantiles"] = {};
  const final: Record<string, SpeciesMoments> = {};
  const stationary: Record<string, SpeciesMoments> = {};
  const distribution: Record<string, { values: number[]; counts: number[] }> = {};
  const period: Record<string, PeriodSummary> = {};
  o.species.forEach((id, i) => {
    const m: number[] = [];
    const s: number[] = [];
    const q = { p05: [] as number[], p25: [] as number[], p50: [] as number[], p75: [] as number[], p95: [] as number[] };
    const pooled: { values: Float64Array; counts: Float64Array }[] = [];
    for (let g = 0; g < nT; g++) {
      const pt = point(g, i);
      const mo = sparseMoments([pt]);
      m.push(mo.mean / scale);
      s.push(Math.sqrt(mo.variance) / scale);
      q.p05.push(quantileSparse(pt.values, pt.counts, mo.n, 0.05) / scale);
      q.p25.push(quantileSparse(pt.values, pt.counts, mo.n, 0.25) / scale);
      q.p50.push(quantileSparse(pt.values, pt.counts, mo.n, 0.5) / scale);
      q.p75.push(quantileSparse(pt.values, pt.counts, mo.n, 0.75) / scale);
      q.p95.push(quantileSparse(pt.values, pt.counts, mo.n, 0.95) / scale);
      if (g >= gStart) pooled.push(pt);
    }
    mean[id] = m;
    sd[id] = s;
    quantiles[id] = q;
    final[id] = momentsOut(sparseMoments([point(nT - 1, i)]), scale);
    stationary[id] = momentsOut(sparseMoments(pooled), scale);
    const tally = new Map<number, number>();
    for (const pt of pooled) for (let k = 0; k < pt.values.length; k++) tally.set(pt.values[k], (tally.get(pt.values[k]) ?? 0) + pt.counts[k]);
    const dv = Array.from(tally.keys()).sort((a, b) => a - b);
    distribution[id] = { values: dv.map((v) => v / scale), counts: dv.map((v) => tally.get(v) as number) };

    let total = 0;
    let cells = 0;
    for (const seg of partial.segments) {
      const l = seg.species[i];
      total += l.periods.length;
      for (let k = 0; k + 1 < l.cellPtr.length; k++) if (l.cellPtr[k + 1] > l.cellPtr[k]) cells++;
    }
    const periods = new Float64Array(total);
    const amps = new Float64Array(total);
    let at = 0;
    for (const seg of partial.segments) {
      periods.set(seg.species[i].periods, at);
      amps.set(seg.species[i].amplitudes, at);
      at += seg.species[i].periods.length;
    }
    let evidence: AcfEvidence | undefined;
    if (partial.acf) {
      const dt = nT > 1 ? times[1] - times[0] : 1;
      evidence = acfVerdict(partial.acf, i, dt);
    }
    const p = periodSummary(periods, amps, cells, scale, evidence?.significant);
    if (evidence) p.acf = evidence;
    if (p.oscillating) {
      p.interval = cellPeriodInterval(partial.segments.map((sg) => sg.species[i].cellPtr), partial.segments.map((sg) => sg.species[i].periods));
    }
    period[id] = p;
  });
  const warnings = guardPeriodsByGrid(period, times);
  return {
    method: o.method,
    seed: o.seed,
    runs: partial.cells,
    units: o.units,
    species: o.species,
    times,
    mean,
    sd,
    quantiles,
    final,
    stationary,
    period,
    stationary_distribution: distribution,
    events: partial.events,
    wall_s: o.wallS,
    events_per_s: o.wallS > 0 ? partial.events / o.wallS : NaN,
    ...(o.method === "tau" ? { tau_epsilon: o.tauEpsilon } : {}),
    burn_in: o.burnIn,
    time_unit: o.timeUnit,
    amount_unit: o.units === "model" ? o.amountUnit : "molecules",
    omega: o.omega,
    warnings,
  };
}

/**
 * Grid guard (issue 12 item 3) on the periods found: a period shorter than MIN_SAMPLES_PER_PERIOD
 * grid steps is not resolved and may be an alias of a faster rhythm, so it is withheld with a
 * `grid-too-coarse` warning. Periods are judged by the larger of the crossing mean and the ACF's
 * estimate. Mutates `period`; returns the warnings.
 */
export function guardPeriodsByGrid(period: Record<string, PeriodSummary>, times: ArrayLike<number>): EngineWarning[] {
  if (times.length < 2) return []; // one grid point: no sampling step to judge
  const dt = times[1] - times[0];
  const coarse: string[] = [];
  let shortest = Infinity;
  for (const [id, p] of Object.entries(period)) {
    const found = p.oscillating ? Math.max(p.mean, p.acf?.period ?? 0) : p.acf?.significant ? (p.acf.period ?? 0) : NaN;
    if (found === found && found < MIN_SAMPLES_PER_PERIOD * dt) {
      coarse.push(id);
      shortest = Math.min(shortest, found);
      period[id] = withheldPeriod(p, "grid-too-coarse");
    }
  }
  if (coarse.length === 0) return [];
  return [gridWarning(dt, shortest, `the rhythm found in ${coarse.join(", ")}`)];
}

/** The `grid-too-coarse` warning for a rhythm of period `period` sampled every dt. */
export function gridWarning(dt: number, period: number, what: string): EngineWarning {
  const fmt = (v: number) => Number(v.toPrecision(3)).toString();
  return makeWarning(
    "grid-too-coarse",
    `The sampling step dt = ${fmt(dt)} is too coarse for ${what} (period about ${fmt(period)}, fewer than ${MIN_SAMPLES_PER_PERIOD} samples per period): periods are not reported because they may be aliased; use dt ≤ ${fmt(period / MIN_SAMPLES_PER_PERIOD)}.`,
    "dt",
  );
}
