/**
 * What the run pages show, derived from the API's JSON: types of the run, summary and cell
 * bodies (CONTRACT.md §2, §3), and small pure helpers (ETA, durations, histogram rows). Pure: no
 * I/O; the browser and tests import it.
 */
import type { RunSettings } from "@/lib/schemas/run-options";
import type { TrajectoryResult } from "@/ssa/ensemble";
import type { EngineWarning } from "@/ssa/warnings";

export type RunStatus = "queued" | "running" | "succeeded" | "failed" | "cancelled";
export type RunMethod = "ode" | "ssa" | "tau";

/** `GET /api/runs/:id` (lib/runs.ts runToJson), as JSON. */
export interface RunJson {
  id: string;
  status: RunStatus;
  progress: number;
  error?: string;
  seed: number;
  /** As stored (lib/schemas/run-options.ts). */
  settings: RunSettings;
  version_id: string;
  circuit_id: string;
  circuit_name: string;
  version_number: number;
  lab_id: string;
  kind: "trace" | "ensemble";
  method: RunMethod;
  chunks_done: number;
  chunks_total: number;
  engine_version: string;
  created_by: string | null;
  created_at: string;
  started_at: string | null;
  finished_at: string | null;
  wall_s: number | null;
  events: number | null;
  /** Caveats on the run's numbers, [] until it has a summary (older API answers may lack it). */
  warnings?: EngineWarning[];
}

/** A 95% interval over cells beside a summary's moments (ssa/intervals.ts); null bounds where undefined. */
export interface MomentIntervalsJson {
  mean: [number | null, number | null]; sd: [number | null, number | null];
  cv: [number | null, number | null]; fano: [number | null, number | null];
  level: number; method: string;
}
export interface MomentsJson { mean: number | null; variance: number | null; cv: number | null; fano: number | null; ci?: MomentIntervalsJson }
export type IntervalStat = "mean" | "sd" | "cv" | "fano";
export interface PeriodJson {
  count: number; mean: number | null; sd: number | null; cv: number | null;
  histogram: { edges: number[]; counts: number[] };
  cells?: number; amplitude?: { mean: number | null; sd: number | null }; oscillating?: boolean;
  crossings?: { count: number; mean: number | null; cv: number | null };
  /** 95% intervals of the period mean and CV over cells, where a period is reported (ensembles). */
  ci?: { mean: [number | null, number | null]; cv: [number | null, number | null]; level: number; method: string };
}
export type QuantileKey = "p05" | "p25" | "p50" | "p75" | "p95";
export const QUANTILE_KEYS: readonly QuantileKey[] = ["p05", "p25", "p50", "p75", "p95"];

/** `GET /api/runs/:id/summary`: the `simulate` JSON plus trace, burn-in and units. NaN arrives as null. */
export interface SummaryJson {
  method: RunMethod;
  seed: number | null;
  runs: number;
  units: "molecules" | "model";
  species: string[];
  times: number[];
  mean: Record<string, (number | null)[]>;
  sd: Record<string, (number | null)[]>;
  quantiles: Record<string, Record<QuantileKey, (number | null)[]>>;
  final: Record<string, MomentsJson>;
  stationary: Record<string, MomentsJson>;
  period: Record<string, PeriodJson>;
  /** Caveats on these numbers (absent from summaries stored before warnings existed). */
  warnings?: EngineWarning[];
  events: number;
  wall_s: number;
  events_per_s?: number;
  burn_in?: number;
  burn_in_rule?: { source: "given" | "relaxation" | "t_end/5"; relaxation_time: number | null; relaxation_times: number };
  time_unit?: string;
  amount_unit?: string;
  omega?: number;
  trace?: Record<string, (number | null)[]>;
  /** The circuit's scheduled changes (format /2 circuits only; ssa/schedule.ts FiredChange). */
  schedule?: ScheduleEntryJson[];
  /** Every distinct amount after burn-in with its number of (cell, grid time) samples. */
  stationary_distribution?: Record<string, { values: number[]; counts: number[] }>;
}

/** `GET /api/runs/:id/cells/:index`: one replayed cell (CONTRACT.md `trajectory`). */
export type CellJson = TrajectoryResult;

/** `GET /api/versions/:id/analysis` (CONTRACT.md §2 `analyze`). */
export interface AnalysisJson {
  steady_state: Record<string, number>;
  eigenvalues: { re: number; im: number }[];
  stable: boolean;
  oscillatory: boolean;
  lna: { covariance: number[][]; cv: Record<string, number | null>; fano: Record<string, number | null> } | null;
  warnings?: EngineWarning[];
}

/** Whether a run may still change: queued or running. */
export const isActive = (s: RunStatus): boolean => s === "queued" || s === "running";

/** How the pages name each method (our labels; the API value is shown beside them). */
export const METHOD_LABEL: Record<RunMethod, string> = {
  ode: "Trace (deterministic ODE)",
  ssa: "Direct Gillespie",
  tau: "Tau-leaping",
};

/** The amount unit a run's numbers are in: molecules, or the circuit's own unit for `units: "model"`. */
export function amountUnitOf(units: "molecules" | "model", modelAmountUnit: string | undefined): string {
  return units === "model" ? (modelAmountUnit ?? "model units") : "molecules";
}

/** Burn-in actually used: the run's setting, else CONTRACT.md's default t_end / 5. */
export const burnInOf = (s: { t_end: number; burn_in?: number }): number => s.burn_in ?? s.t_end / 5;

/**
 * Seconds left for a running run, from the fraction done and the time since it started:
 * elapsed · (1 − p) / p. Null before any progress (nothing to extrapolate from) or when not running.
 */
export function etaSeconds(run: Pick<RunJson, "status" | "progress" | "started_at">, nowMs: number): number | null {
  if (run.status !== "running" || !run.started_at) return null;
  const p = run.progress;
  if (!(p > 0 && p < 1)) return null;
  const elapsedS = Math.max(0, (nowMs - Date.parse(run.started_at)) / 1000);
  return (elapsedS * (1 - p)) / p;
}

/** A duration for people: "0.4 s", "12 s", "3 min 5 s", "2 h 10 min". */
export function formatDuration(seconds: number | null | undefined): string {
  if (seconds == null || !Number.isFinite(seconds)) return "—";
  if (seconds < 10) return `${Math.max(0, seconds).toFixed(1)} s`;
  if (seconds < 60) return `${Math.round(seconds)} s`;
  if (seconds < 3600) {
    const m = Math.floor(seconds / 60);
    const s = Math.round(seconds - m * 60);
    return s ? `${m} min ${s} s` : `${m} min`;
  }
  const h = Math.floor(seconds / 3600);
  const m = Math.round((seconds - h * 3600) / 60);
  return m ? `${h} h ${m} min` : `${h} h`;
}

/** A number with `digits` significant digits, without exponent noise for ordinary sizes; "—" for null/NaN. */
export function formatNumber(v: number | null | undefined, digits = 4): string {
  if (v == null || !Number.isFinite(v)) return "—";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-3) return v.toExponential(Math.max(0, digits - 1)).replace("e+", "e");
  return String(Number(v.toPrecision(digits)));
}

/** An interval as "[lo, hi]" in formatNumber's digits, or "" when the summary has none (older runs, one cell). */
export function formatInterval<S extends string>(ci: Partial<Record<S, [number | null, number | null]>> | undefined, stat: S, digits = 4): string {
  const b = ci?.[stat];
  if (!b || b[0] == null || b[1] == null || !Number.isFinite(b[0]) || !Number.isFinite(b[1])) return "";
  return `[${formatNumber(b[0], digits)}, ${formatNumber(b[1], digits)}]`;
}

/** Large counts with thin grouping: 12 345 678. */
export function formatCount(v: number | null | undefined): string {
  if (v == null || !Number.isFinite(v)) return "—";
  return Math.round(v).toLocaleString("en-US").replace(/,/g, "\u2009");
}

/**
 * A histogram of values: one bin per integer when the values are whole numbers spanning at most
 * 60 of them (molecule counts), otherwise ⌈√n⌉ equal bins (at most 40). Bins are [x0, x1), the last closed.
 */
export function histogramOf(values: number[]): { edges: number[]; counts: number[] } {
  return weightedHistogramOf(values, values.map(() => 1));
}

/**
 * The same binning for values that each occur `weights[k]` times (an exact per-count tally,
 * such as a summary's `stationary_distribution`); ⌈√n⌉ uses the total weight.
 */
export function weightedHistogramOf(values: number[], weights: number[]): { edges: number[]; counts: number[] } {
  const keep = values.map((v, k) => Number.isFinite(v) && weights[k]! > 0);
  const finite = values.filter((_, k) => keep[k]);
  const w8 = weights.filter((_, k) => keep[k]);
  if (finite.length === 0) return { edges: [], counts: [] };
  let lo = Infinity;
  let hi = -Infinity;
  let total = 0;
  for (let k = 0; k < finite.length; k++) {
    if (finite[k]! < lo) lo = finite[k]!;
    if (finite[k]! > hi) hi = finite[k]!;
    total += w8[k]!;
  }
  const integers = finite.every((v) => Number.isInteger(v));
  if (integers && hi - lo <= 60) {
    // One bin per count, centred on it: [k − ½, k + ½).
    const counts = new Array<number>(hi - lo + 1).fill(0);
    for (let k = 0; k < finite.length; k++) counts[finite[k]! - lo]! += w8[k]!;
    return { edges: Array.from({ length: counts.length + 1 }, (_, k) => lo - 0.5 + k), counts };
  }
  if (hi === lo) return { edges: [lo - 0.5, hi + 0.5], counts: [total] };
  const bins = Math.min(40, Math.max(1, Math.ceil(Math.sqrt(total))));
  const w = (hi - lo) / bins;
  const counts = new Array<number>(bins).fill(0);
  for (let k = 0; k < finite.length; k++) counts[Math.min(bins - 1, Math.floor((finite[k]! - lo) / w))]! += w8[k]!;
  return { edges: Array.from({ length: bins + 1 }, (_, b) => (b === bins ? hi : lo + b * w)), counts };
}

/** Values of one species in the given cells at grid times ≥ burnIn (pooled, cell by cell). */
export function valuesAfterBurnIn(cells: CellJson[], species: string, burnIn: number): number[] {
  const out: number[] = [];
  for (const c of cells) {
    const v = c.values[species];
    if (!v) continue;
    c.times.forEach((t, g) => {
      if (t >= burnIn) out.push(v[g]);
    });
  }
  return out;
}

/** Sample mean, SD (n − 1), CV and Fano of plain numbers; nulls where undefined. */
export function momentsOf(values: number[]): { n: number; mean: number | null; sd: number | null; cv: number | null; fano: number | null } {
  const n = values.length;
  if (n === 0) return { n, mean: null, sd: null, cv: null, fano: null };
  let s = 0;
  for (const v of values) s += v;
  const mean = s / n;
  let ss = 0;
  for (const v of values) ss += (v - mean) * (v - mean);
  const variance = n > 1 ? ss / (n - 1) : 0;
  const sd = Math.sqrt(variance);
  return { n, mean, sd, cv: mean !== 0 ? sd / mean : null, fano: mean !== 0 ? variance / mean : null };
}

/** Standard deviation from a variance that may be null. */
export const sdOf = (variance: number | null | undefined): number | null =>
  variance == null || !Number.isFinite(variance) ? null : Math.sqrt(Math.max(0, variance));

/**
 * The API error `"<field>: <reason>"` split into the field and the reason (CONTRACT.md §3).
 * "body" and messages without a field prefix give field null.
 */
export function splitApiError(error: string): { field: string | null; reason: string } {
  const m = /^([A-Za-z_][\w.[\]]*): (.*)$/s.exec(error);
  if (!m || m[1] === "body") return { field: null, reason: error };
  return { field: m[1], reason: m[2] };
}

/** One change of a run's schedule report (ssa/schedule.ts FiredChange). */
export interface ScheduleEntryJson {
  index?: number;
  at?: number;
  when?: string;
  delay?: number;
  set: Record<string, number>;
  cells?: number;
  of?: number;
  first_at?: { mean: number; ci: [number, number] | null; sd: number; median: number; min: number; max: number } | null;
  firings_per_cell?: number;
}

const fmt = (x: number) => (Math.abs(x) >= 100 ? x.toFixed(0) : x.toPrecision(3).replace(/\.?0+$/, ""));

/** What a change sets, as "IPTG = 1000, k = 2". */
export const scheduleSets = (c: ScheduleEntryJson): string => Object.entries(c.set).map(([k, v]) => `${k} = ${v}`).join(", ");

/** The time a chart marks a change at: a timed change's time, a triggered one's mean first firing; null when it never fired. */
export const scheduleMarkTime = (c: ScheduleEntryJson): number | null => (c.at !== undefined ? c.at : (c.first_at?.mean ?? null));

/**
 * One change in words: "at 100 min: IPTG = 1000", or "when A > 50 (then 5 min later): k = 0;
 * fired in 998 of 1000 cells, first at 102 min (95% CI 100–104, range 60–170)".
 */
export function describeScheduleEntry(c: ScheduleEntryJson, timeUnit: string): string {
  if (c.when === undefined) return `at ${c.at} ${timeUnit}: ${scheduleSets(c)}`;
  const head = `when ${c.when}${c.delay ? ` (then ${c.delay} ${timeUnit} later)` : ""}: ${scheduleSets(c)}`;
  const f = c.first_at;
  if (!f) return `${head}; never fired`;
  const ci = f.ci ? `95% CI ${fmt(f.ci[0])}–${fmt(f.ci[1])}, ` : "";
  const where = c.of === 1 ? "fired" : `fired in ${c.cells} of ${c.of} cells`;
  return `${head}; ${where}, first at ${c.of === 1 ? "" : "mean "}${fmt(f.mean)} ${timeUnit}${c.of === 1 ? "" : ` (${ci}range ${fmt(f.min)}–${fmt(f.max)})`}`;
}

