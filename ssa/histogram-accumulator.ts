/**
 * Exact per-point histograms of many blocks of cells, kept as dense counts while the sampled
 * values are small non-negative integers (molecule counts), so adding a block of nb cells costs
 * O(nb) per grid point with no sort and no merge. `toCSR()` gives the same sparse histograms
 * (ssa/stats.ts HistogramCSR) as sorting every block and merging them: the counts are exact, so
 * the order blocks arrive in never shows. Values that are not such integers (tau-leaping with
 * fractional stoichiometry, a very wide range) switch the accumulator, once and for good, to the
 * sort-and-merge path (histogramsOfBlock, mergeHistograms). Pure: no I/O.
 */
import { histogramsOfBlock, mergeHistograms, type HistogramCSR } from "./stats";

/** Widest range (max − min + 1) of one point kept dense. */
const MAX_POINT_RANGE = 1 << 16;
/** Dense entries over all points (4 bytes each, before slack of up to half as many) before the accumulator goes sparse: 32 MB. */
const MAX_DENSE_ENTRIES = 1 << 23;

export class HistogramAccumulator {
  /** Per point, the value of counts[p][0], and the dense counts (null until the point has a sample). */
  private readonly lo: Float64Array;
  private readonly counts: (Int32Array | null)[];
  private entries = 0;
  /** Set once the values stop fitting the dense form; from then on every block is sorted and merged into it. */
  private sparse: HistogramCSR | null = null;
  /** The first block's histograms, sorted, until a second block arrives. */
  private first: HistogramCSR | null = null;
  private empty = true;

  constructor(readonly nPoints: number) {
    this.lo = new Float64Array(nPoints);
    this.counts = new Array<Int32Array | null>(nPoints).fill(null);
  }

  /**
   * Adds a block: point p's nb values sit at block[p·stride .. p·stride + nb). The block may be
   * reordered in place (the sparse path sorts it); its values are not changed.
   */
  addBlock(block: Float64Array, stride: number, nb: number): void {
    if (nb <= 0) return;
    if (this.empty) {
      // One block is cheapest sorted (a few cells over many grid points would leave dense
      // counts mostly empty); the dense form pays from the second block on.
      this.empty = false;
      this.first = histogramsOfBlock(block, this.nPoints, stride, nb);
      return;
    }
    if (this.first !== null) {
      const first = this.first;
      this.first = null;
      if (!this.addSparseDense(first)) this.sparse = first;
    }
    if (this.sparse === null && !this.addDense(block, stride, nb)) this.goSparse();
    if (this.sparse !== null) {
      const h = histogramsOfBlock(block, this.nPoints, stride, nb);
      this.sparse = mergeHistograms(this.sparse, h, this.nPoints);
    }
  }

  /** Adds sparse histograms (to an empty dense form), or returns false (having added nothing) when they do not fit. */
  private addSparseDense(h: HistogramCSR): boolean {
    const { histPtr, histValues, histCounts } = h;
    let need = 0;
    for (let p = 0; p < this.nPoints; p++) {
      const a = histPtr[p];
      const b = histPtr[p + 1];
      if (a === b) continue;
      for (let k = a; k < b; k++) if (!(histValues[k] >= 0 && histValues[k] === Math.floor(histValues[k]))) return false;
      const range = histValues[b - 1] - histValues[a] + 1; // values ascend
      if (range > MAX_POINT_RANGE) return false;
      need += range;
    }
    if (this.entries + need > MAX_DENSE_ENTRIES) return false;
    for (let p = 0; p < this.nPoints; p++) {
      const a = histPtr[p];
      const b = histPtr[p + 1];
      if (a === b) continue;
      const c = this.widen(p, histValues[a], histValues[b - 1]);
      const off = this.lo[p];
      for (let k = a; k < b; k++) c[histValues[k] - off] += histCounts[k];
    }
    return true;
  }

  /** Adds the block densely, or returns false (having added nothing) when it does not fit. */
  private addDense(block: Float64Array, stride: number, nb: number): boolean {
    const { lo, counts } = this;
    // First pass: every point's range must fit before any count is added.
    let grow = 0;
    for (let p = 0; p < this.nPoints; p++) {
      const base = p * stride;
      let min = Infinity;
      let max = -Infinity;
      for (let k = 0; k < nb; k++) {
        const v = block[base + k];
        if (!(v >= 0 && v === Math.floor(v))) return false;
        if (v < min) min = v;
        if (v > max) max = v;
      }
      const c = counts[p];
      const from = c ? Math.min(lo[p], min) : min;
      const to = c ? Math.max(lo[p] + c.length - 1, max) : max;
      if (to - from + 1 > MAX_POINT_RANGE) return false;
      if (!c || from < lo[p] || to > lo[p] + c.length - 1) grow += to - from + 1 - (c ? c.length : 0);
    }
    if (this.entries + grow > MAX_DENSE_ENTRIES) return false;
    for (let p = 0; p < this.nPoints; p++) {
      const base = p * stride;
      let min = Infinity;
      let max = -Infinity;
      for (let k = 0; k < nb; k++) {
        const v = block[base + k];
        if (v < min) min = v;
        if (v > max) max = v;
      }
      let c = counts[p];
      if (!c || min < lo[p] || max > lo[p] + c.length - 1) c = this.widen(p, min, max);
      const off = lo[p];
      for (let k = 0; k < nb; k++) c[block[base + k] - off]++;
    }
    return true;
  }

  /** Point p's counts, widened to cover [min, max], with room on the side a bound moved (within MAX_POINT_RANGE). */
  private widen(p: number, min: number, max: number): Int32Array {
    const old = this.counts[p];
    const oldLo = this.lo[p];
    const oldHi = old ? oldLo + old.length - 1 : -1;
    const unionLo = old ? Math.min(oldLo, min) : min;
    const unionHi = old ? Math.max(oldHi, max) : max;
    // A quarter of the range as slack each way a bound moved, so a drifting mean does not
    // reallocate on every block; none when that would pass the widest range kept dense.
    const slack = Math.ceil((unionHi - unionLo + 1) / 4);
    let from = !old || unionLo < oldLo ? Math.max(0, unionLo - slack) : unionLo;
    let to = !old || unionHi > oldHi ? unionHi + slack : unionHi;
    if (to - from + 1 > MAX_POINT_RANGE) {
      from = unionLo;
      to = unionHi;
    }
    const c = new Int32Array(to - from + 1);
    if (old) c.set(old, oldLo - from);
    this.entries += c.length - (old ? old.length : 0);
    this.counts[p] = c;
    this.lo[p] = from;
    return c;
  }

  /** Turns what is held densely into the sparse form; later blocks are sorted and merged. */
  private goSparse(): void {
    this.sparse = this.denseCSR();
    this.counts.fill(null);
    this.entries = 0;
  }

  private denseCSR(): HistogramCSR {
    const n = this.nPoints;
    const histPtr = new Float64Array(n + 1);
    for (let p = 0; p < n; p++) {
      const c = this.counts[p];
      let distinct = 0;
      if (c) for (let v = 0; v < c.length; v++) if (c[v] !== 0) distinct++;
      histPtr[p + 1] = histPtr[p] + distinct;
    }
    const histValues = new Float64Array(histPtr[n]);
    const histCounts = new Float64Array(histPtr[n]);
    let at = 0;
    for (let p = 0; p < n; p++) {
      const c = this.counts[p];
      if (!c) continue;
      const off = this.lo[p];
      for (let v = 0; v < c.length; v++) {
        if (c[v] === 0) continue;
        histValues[at] = v + off;
        histCounts[at++] = c[v];
      }
    }
    return { histPtr, histValues, histCounts };
  }

  /** The histograms of every block added, exactly as sorting and merging them would give. @throws RangeError when nothing was added. */
  toCSR(): HistogramCSR {
    if (this.empty) throw new RangeError("HistogramAccumulator: no samples added");
    return this.first ?? this.sparse ?? this.denseCSR();
  }
}
