/**
 * CSV builders for a run's exports: the bands (per species and grid time), the noise table
 * (stationary, final and period statistics per species) and one replayed cell. RFC 4180 style:
 * comma separated, CRLF line ends, fields quoted only when they hold a comma, quote or line break;
 * numbers in full precision; undefined values (NaN, null) as empty fields. Pure: no I/O.
 */
import { QUANTILE_KEYS, sdOf, type AnalysisJson, type CellJson, type MomentsJson, type SummaryJson } from "@/lib/view/run-view";

const EOL = "\r\n";

/** One CSV field: numbers as JavaScript prints them (round-trips), null/NaN/±∞ empty, text quoted when needed. */
export function csvField(v: string | number | boolean | null | undefined): string {
  if (v == null) return "";
  if (typeof v === "number") return Number.isFinite(v) ? String(v) : "";
  const s = String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** Rows (the first is the header) as CSV text ending in a line break. */
export function toCsv(rows: (string | number | boolean | null | undefined)[][]): string {
  return rows.map((r) => r.map(csvField).join(",")).join(EOL) + EOL;
}

/** Column name of a time column with its unit: `time_min`. */
const timeColumn = (timeUnit: string | undefined) => `time_${timeUnit ?? "model"}`;

/** Amount unit of a summary's numbers. */
const amountUnit = (s: Pick<SummaryJson, "units" | "amount_unit">) => (s.units === "model" ? (s.amount_unit ?? "model") : "molecules");

/**
 * The bands as long-format CSV: one row per species and grid time, with the mean, SD and
 * quantiles across cells, the mean-field trace at that time, and the amount unit.
 * Rows: species.length × times.length (+ the header).
 */
export function bandsCsv(s: SummaryJson): string {
  const header = ["species", timeColumn(s.time_unit), "mean", "sd", ...QUANTILE_KEYS, "mean_field", "unit"];
  const unit = amountUnit(s);
  const rows: (string | number | null | undefined)[][] = [header];
  for (const sp of s.species) {
    const q = s.quantiles[sp];
    const trace = s.trace?.[sp];
    s.times.forEach((t, g) => {
      rows.push([sp, t, s.mean[sp]?.[g], s.sd[sp]?.[g], ...QUANTILE_KEYS.map((k) => q?.[k]?.[g]), trace?.[g], unit]);
    });
  }
  return toCsv(rows);
}

const CI_STATS = ["mean", "sd", "cv", "fano"] as const;

/** Header of the interval columns: stationary_mean_lo, stationary_mean_hi, … final_fano_hi, ci_level, ci_method. */
const ciColumns = (): string[] => [
  ...(["stationary", "final"] as const).flatMap((w) => CI_STATS.flatMap((k) => [`${w}_${k}_lo`, `${w}_${k}_hi`])),
  "ci_level", "ci_method",
];

/** One species' interval fields in ciColumns' order (empty where the summary has none). */
function ciFields(st: MomentsJson | undefined, fi: MomentsJson | undefined): (string | number | null | undefined)[] {
  const pair = (m: MomentsJson | undefined, k: (typeof CI_STATS)[number]) => [m?.ci?.[k]?.[0], m?.ci?.[k]?.[1]];
  const ci = st?.ci ?? fi?.ci;
  return [...CI_STATS.flatMap((k) => pair(st, k)), ...CI_STATS.flatMap((k) => pair(fi, k)), ci?.level, ci?.method];
}

/**
 * The noise table as CSV: one row per species with the stationary (after burn-in) and final
 * moments, the period spread and amplitude, and, when given, the LNA CV and Fano factor beside;
 * when the summary carries 95% intervals (ssa/intervals.ts), their bounds, level and method follow
 * in columns of their own at the end, so readers of the older columns see no change.
 */
export function noiseCsv(s: SummaryJson, lna?: AnalysisJson["lna"] | null): string {
  const tu = s.time_unit ?? "model";
  const header = [
    "species", "stationary_mean", "stationary_sd", "stationary_cv", "stationary_fano",
    "final_mean", "final_sd", "final_cv", "final_fano",
    "period_count", `period_mean_${tu}`, `period_sd_${tu}`, "period_cv", "amplitude_mean", "amplitude_sd",
    ...(lna ? ["lna_cv", "lna_fano"] : []), "burn_in_" + tu, "unit",
  ];
  const hasCi = s.species.some((sp) => s.stationary[sp]?.ci || s.final[sp]?.ci);
  if (hasCi) header.push(...ciColumns());
  const unit = amountUnit(s);
  const rows: (string | number | null | undefined)[][] = [header];
  for (const sp of s.species) {
    const st = s.stationary[sp];
    const fi = s.final[sp];
    const p = s.period[sp];
    rows.push([
      sp, st?.mean, sdOf(st?.variance), st?.cv, st?.fano,
      fi?.mean, sdOf(fi?.variance), fi?.cv, fi?.fano,
      p?.count ?? 0, p?.mean, p?.sd, p?.cv, p?.amplitude?.mean, p?.amplitude?.sd,
      ...(lna ? [lna.cv[sp], lna.fano[sp]] : []), s.burn_in, unit,
      ...(hasCi ? ciFields(st, fi) : []),
    ]);
  }
  return toCsv(rows);
}

/** One replayed cell as wide CSV: seed, cell index, time, then one column per species. */
export function cellCsv(c: CellJson): string {
  const rows: (string | number)[][] = [["seed", "cell", timeColumn(c.time_unit), ...c.species]];
  c.times.forEach((t, g) => rows.push([c.seed, c.index, t, ...c.species.map((sp) => c.values[sp][g])]));
  return toCsv(rows);
}

/** A file name without extension that says what is in it: `run-12-bands-A`. */
export function exportBaseName(runId: string, what: string): string {
  return `run-${runId}-${what.replace(/[^A-Za-z0-9_-]+/g, "-")}`;
}

/** A file name that says what is in it: `run-12-bands.csv`, `run-12-cell-3.json`. */
export const exportFileName = (runId: string, what: string, ext: string): string => `${exportBaseName(runId, what)}.${ext}`;
