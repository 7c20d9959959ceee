/**
 * Stationarity checks (issue 12, item 5): every stationary statistic is checked for drift, first
 * against second half of the window after burn-in, over cells. How the burn-in is chosen is in
 * ssa/burn-in.ts (it needs the steady state, so the ODE code, which worker threads never load).
 * Pure: no I/O.
 */
import type { Partial } from "./stats";
import { makeWarning, type EngineWarning } from "./warnings";

/** Relaxation times that pass before stationary statistics start (e^−5 < 1% of the initial offset). */
export const BURN_IN_RELAXATION_TIMES = 5;
/** The default burn-in never leaves less than this share of the run to measure. */
export const MAX_DEFAULT_BURN_IN_SHARE = 0.5;
/**
 * |z| above which the half-window drift counts as not stationary. Under stationarity z is close to
 * standard normal over cells, so a false alarm per species has probability about 6e-5.
 */
export const DRIFT_Z_LIMIT = 4;
/** A deterministic path counts as drifting when its half-window means differ by more than this share. */
export const PATH_DRIFT_LIMIT = 0.01;

export type BurnInSource = "given" | "relaxation" | "t_end/5";

export interface BurnInChoice {
  burnIn: number;
  source: BurnInSource;
  /** Slowest relaxation time of the mean field at its stable steady state (model time), or null. */
  relaxationTime: number | null;
  warnings: EngineWarning[];
}

export const round = (v: number) => Number(v.toPrecision(4));

/** First grid index at or after burn-in (the same rule as finalizeSummary). */
export function windowStart(times: ArrayLike<number>, burnIn: number): number {
  let g = 0;
  while (g < times.length - 1 && times[g] < burnIn) g++;
  return g;
}

/** Grid points in each half of a window of n points (the middle point of an odd window is left out). */
export const halfLength = (n: number): number => Math.floor(n / 2);

/**
 * Σx over the first and over the last half of one cell's window (grid points gStart … nTimes − 1
 * of y[offset + g·stride]) into out[0], out[1]. Integer counts: exact, so they merge in any order.
 */
export function cellHalfSums(y: Float64Array, offset: number, stride: number, gStart: number, nTimes: number, out: Float64Array): void {
  const h = halfLength(nTimes - gStart);
  let head = 0;
  let tail = 0;
  for (let k = 0; k < h; k++) {
    head += y[offset + (gStart + k) * stride];
    tail += y[offset + (nTimes - h + k) * stride];
  }
  out[0] = head;
  out[1] = tail;
}

export interface DriftCheck {
  /** Mean over cells of (first-half mean − second-half mean), output units. */
  difference: number;
  /** Its standard error over cells, output units (NaN with fewer than 2 cells). */
  se: number;
  z: number;
}

/**
 * Half-window drift of every species over cells: per cell d = (first-half mean − second-half
 * mean); cells are independent, so mean(d) / (sd(d)/√cells) is close to standard normal when the
 * ensemble is stationary, whatever the correlation of samples within a cell. Null for a species
 * when the partial has no half sums or fewer than 2 cells or 2 points per half.
 */
export function checkDrift(partial: Partial, scale = 1): (DriftCheck | null)[] {
  const h = partial.cellSamples !== undefined ? halfLength(partial.cellSamples) : 0;
  return Array.from({ length: partial.nSpecies }, (_, s) => {
    if (h < 2 || partial.cells < 2) return null;
    let n = 0;
    let sum = 0;
    const ds: number[] = [];
    for (const seg of partial.segments) {
      const l = seg.species[s];
      if (!l.sumHead || !l.sumTail) return null;
      for (let c = 0; c < l.sumHead.length; c++) {
        const d = (l.sumHead[c] - l.sumTail[c]) / h;
        ds.push(d);
        sum += d;
        n++;
      }
    }
    const mean = sum / n;
    let ss = 0;
    for (const d of ds) ss += (d - mean) * (d - mean);
    const se = Math.sqrt(ss / (n - 1) / n);
    const z = se > 0 ? mean / se : mean === 0 ? 0 : Math.sign(mean) * Infinity;
    return { difference: mean / scale, se: se / scale, z };
  });
}

/** `not-stationary` warnings (field `stationary.<species>`) for species whose drift |z| exceeds DRIFT_Z_LIMIT. */
export function driftWarnings(species: string[], checks: (DriftCheck | null)[], burnIn: number, timeUnit: string, relaxationTime: number | null): EngineWarning[] {
  const out: EngineWarning[] = [];
  checks.forEach((c, i) => {
    if (!c || !(Math.abs(c.z) > DRIFT_Z_LIMIT)) return;
    const dir = c.difference < 0 ? "rises" : "falls";
    const tau = relaxationTime !== null ? ` (the circuit relaxes with a time constant of ${round(relaxationTime)} ${timeUnit})` : "";
    out.push(makeWarning(
      "not-stationary",
      `stationary.${species[i]}: the ensemble mean still ${dir} during the window after burn-in ${round(burnIn)} ${timeUnit}: the first half's mean differs from the second half's by ${round(-c.difference)} (${round(Math.abs(c.z))} standard errors over cells)${tau}; use a longer t_end or a later burn_in.`,
      `stationary.${species[i]}`,
    ));
  });
  return out;
}

/** Drift of a deterministic path's window: `not-stationary` when the half means differ by more than PATH_DRIFT_LIMIT. */
export function pathDriftWarnings(species: string[], trace: Record<string, number[]>, gStart: number, burnIn: number, timeUnit: string): EngineWarning[] {
  const out: EngineWarning[] = [];
  for (const id of species) {
    const path = trace[id];
    const h = halfLength(path.length - gStart);
    if (h < 2) continue;
    let head = 0;
    let tail = 0;
    for (let k = 0; k < h; k++) {
      head += path[gStart + k];
      tail += path[path.length - h + k];
    }
    head /= h;
    tail /= h;
    const ref = Math.max(Math.abs(head), Math.abs(tail));
    if (ref > 0 && Math.abs(tail - head) > PATH_DRIFT_LIMIT * ref) {
      out.push(makeWarning(
        "not-stationary",
        `stationary.${id}: the path still ${tail > head ? "rises" : "falls"} during the window after burn-in ${round(burnIn)} ${timeUnit} (half-window means ${round(head)} and ${round(tail)}); use a longer t_end or a later burn_in.`,
        `stationary.${id}`,
      ));
    }
  }
  return out;
}
