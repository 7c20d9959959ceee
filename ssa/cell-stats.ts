/**
 * Per-cell statistics of a finished ensemble, the input of the bootstrap over cells
 * (ssa/bootstrap.ts): per species and cell, the sample count after burn-in, Σx and Σx² (exact
 * integer sums), and the cell's oscillation periods as count, Σp and Σp². Pooling any multiset
 * of cells is then a sum of their sums, the same pooled definition as `stationary` and `period`
 * in the summary. Stored with a run's result as one Float64Array (`encodeCellStats`).
 * Pure: no I/O.
 */
import type { Partial } from "./stats";

export const CELL_STATS_FORMAT = 1;
const HEADER = 4; // format, cells, species, samples per cell

/** Per-cell sums of an ensemble; arrays are species-major: entry s·cells + c is cell c of species s. */
export interface CellStats {
  cells: number;
  nSpecies: number;
  /** Samples per cell at grid times ≥ burn-in (every cell has the same grid). */
  samples: number;
  sum: Float64Array;
  sumSq: Float64Array;
  periodCount: Float64Array;
  periodSum: Float64Array;
  periodSumSq: Float64Array;
}

/**
 * Per-cell statistics of a merged partial covering cells [0, cells).
 * @throws RangeError when the partial does not cover every cell in one range or lacks per-cell sums.
 */
export function cellStatsOf(partial: Partial): CellStats {
  const n = partial.cells;
  const nS = partial.nSpecies;
  const seg = partial.segments[0];
  if (partial.segments.length !== 1 || !seg || seg.first !== 0 || seg.last !== n) {
    throw new RangeError("cellStatsOf: the partial must cover cells 0 … cells − 1 in one range");
  }
  if (partial.cellSamples === undefined) throw new RangeError("cellStatsOf: the partial has no per-cell sums");
  const out: CellStats = {
    cells: n, nSpecies: nS, samples: partial.cellSamples,
    sum: new Float64Array(n * nS), sumSq: new Float64Array(n * nS),
    periodCount: new Float64Array(n * nS), periodSum: new Float64Array(n * nS), periodSumSq: new Float64Array(n * nS),
  };
  for (let s = 0; s < nS; s++) {
    const l = seg.species[s];
    if (!l.sum || !l.sumSq || l.sum.length !== n) throw new RangeError("cellStatsOf: the partial has no per-cell sums");
    out.sum.set(l.sum, s * n);
    out.sumSq.set(l.sumSq, s * n);
    for (let c = 0; c < n; c++) {
      let ps = 0;
      let pss = 0;
      for (let k = l.cellPtr[c]; k < l.cellPtr[c + 1]; k++) {
        ps += l.periods[k];
        pss += l.periods[k] * l.periods[k];
      }
      out.periodCount[s * n + c] = l.cellPtr[c + 1] - l.cellPtr[c];
      out.periodSum[s * n + c] = ps;
      out.periodSumSq[s * n + c] = pss;
    }
  }
  return out;
}

/** One Float64Array: a 4-number header (format, cells, species, samples), then the five arrays. */
export function encodeCellStats(cs: CellStats): Float64Array {
  const m = cs.cells * cs.nSpecies;
  const out = new Float64Array(HEADER + 5 * m);
  out[0] = CELL_STATS_FORMAT;
  out[1] = cs.cells;
  out[2] = cs.nSpecies;
  out[3] = cs.samples;
  [cs.sum, cs.sumSq, cs.periodCount, cs.periodSum, cs.periodSumSq].forEach((a, k) => out.set(a, HEADER + k * m));
  return out;
}

/**
 * Inverse of encodeCellStats (the arrays are views into `data`).
 * @throws RangeError for another format or a length that does not match the header.
 */
export function decodeCellStats(data: Float64Array): CellStats {
  if (data.length < HEADER || data[0] !== CELL_STATS_FORMAT) throw new RangeError("decodeCellStats: unknown format");
  const cells = data[1];
  const nSpecies = data[2];
  const m = cells * nSpecies;
  if (data.length !== HEADER + 5 * m) throw new RangeError("decodeCellStats: length does not match the header");
  const part = (k: number) => data.subarray(HEADER + k * m, HEADER + (k + 1) * m);
  return { cells, nSpecies, samples: data[3], sum: part(0), sumSq: part(1), periodCount: part(2), periodSum: part(3), periodSumSq: part(4) };
}
