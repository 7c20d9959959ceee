/**
 * What the comparison pages and exports show, derived from the API's JSON: the comparison and
 * its results (noise table with bootstrap intervals), the difference test, the bands of every
 * design, the noise table as CSV, and the vega-lite charts. Pure: no I/O; the browser, the
 * routes and tests import it.
 */
import type { VisualizationSpec } from "vega-embed";

import { toCsv } from "@/lib/view/run-export";
import type { EngineWarning } from "@/ssa/warnings";

export type ComparisonStatus = "draft" | "running" | "succeeded" | "failed" | "cancelled";

/** A point estimate with its 95% percentile-bootstrap interval over cells; null where undefined. */
export interface IntervalJson { value: number | null; lo: number | null; hi: number | null }

export interface SpeciesNoiseJson {
  species: string;
  mean: IntervalJson; sd: IntervalJson; cv: IntervalJson; fano: IntervalJson;
  /** Null unless the species oscillates (the run summary's rule: crossings regular enough). */
  period_mean: IntervalJson | null; period_cv: IntervalJson | null;
  period_count: number; oscillating: boolean;
  /** Linear noise approximation at the design's stable steady state (molecules), else null. */
  lna_cv: number | null; lna_fano: number | null;
}

export interface DesignResultJson {
  design_id: string; position: number; label: string; run_id: string; seed: number; cells: number;
  values: Record<string, number> | null;
  lna: { stable: boolean | null; oscillatory: boolean | null; note: string };
  species: SpeciesNoiseJson[];
  /** The design run's warnings (absent from results stored before warnings existed). */
  warnings?: EngineWarning[];
}

/** The LNA CV along a sweep's first axis (per value of the second axis for a grid). */
export interface LnaCurveJson {
  parameter: string; scale: "list" | "linear" | "log";
  group: string | null;
  points: { x: number; group: number | null; cv: Record<string, number | null> }[];
}

export interface ComparisonResultsJson {
  format: "burstwise.comparison-results/1";
  computed_at: string;
  level: number; replicates: number; bootstrap_seed: number;
  method: string; time_unit: string; amount_unit: "molecules";
  designs: DesignResultJson[];
  lna_curve: LnaCurveJson | null;
}

export interface SweepAxisJson { parameter: string; scale: "list" | "linear" | "log"; values?: number[]; from?: number; to?: number; points?: number }

export interface DesignJson {
  id: string; position: number; label: string; version_id: string; circuit_id: string; circuit_name: string; version_number: number;
  overrides: Record<string, number>; values: Record<string, number> | null;
  run: { id: string; status: string; error: string | null; chunks_done: number; chunks_total: number; seed: number } | null;
}

/** `GET /api/comparisons/:id`. */
export interface ComparisonJson {
  id: string; lab_id: string; name: string; description: string | null; kind: "designs" | "sweep";
  sweep: { version_id: string; overrides?: Record<string, number>; axes: SweepAxisJson[] } | null;
  settings: { method: "ssa" | "tau"; t_end: number; dt: number; runs: number; burn_in?: number };
  seed: number; common_seed: boolean; status: ComparisonStatus; error: string | null;
  progress: number; created_by: string | null; created_at: string; launched_at: string | null; finished_at: string | null;
  designs: DesignJson[];
  results: ComparisonResultsJson | null;
  /** Running with every design run succeeded: the worker is computing the results. */
  finishing?: boolean;
}

export interface DifferenceJson { difference: number | null; lo: number | null; hi: number | null; p_value: number | null; share_b_lower: number | null; replicates: number }

/** `GET /api/comparisons/:id/test`. */
export interface DifferenceTestJson {
  species: string; level: number; paired: boolean; replicates: number;
  a: { design_id: string; label: string; cv: number | null; period_cv: number | null };
  b: { design_id: string; label: string; cv: number | null; period_cv: number | null };
  cv: DifferenceJson & { significant: boolean };
  period_cv: (DifferenceJson & { significant: boolean }) | null;
  period_note: string | null;
  caveat: string;
}

export interface DesignBandsJson {
  design_id: string; label: string; times: number[];
  mean: (number | null)[]; p05: (number | null)[]; p25: (number | null)[]; p50: (number | null)[]; p75: (number | null)[]; p95: (number | null)[];
}

/** `GET /api/comparisons/:id/bands?species=`. */
export interface ComparisonBandsJson { species: string; time_unit: string; amount_unit: "molecules"; designs: DesignBandsJson[] }

/** The caveat every difference test carries. */
export const MODEL_CAVEAT =
  "This test compares simulated ensembles of the model: it says how sure we are that the model predicts a difference, not that cells built in the lab will differ.";

/** Ends of an interval as text: "0.213 (0.205–0.221)". */
export function formatInterval(iv: IntervalJson | null | undefined, fmt: (v: number | null | undefined) => string): string {
  if (!iv || iv.value == null) return "—";
  return `${fmt(iv.value)} (${fmt(iv.lo)}–${fmt(iv.hi)})`;
}

/** Columns of the noise-table CSV, per design and species. */
export const NOISE_CSV_HEADER = [
  "design", "design_id", "position", "circuit", "version", "run_id", "seed", "cells", "parameters", "species",
  "mean", "mean_lo", "mean_hi", "sd", "sd_lo", "sd_hi", "cv", "cv_lo", "cv_hi", "fano", "fano_lo", "fano_hi",
  "period_mean", "period_mean_lo", "period_mean_hi", "period_cv", "period_cv_lo", "period_cv_hi", "period_count",
  "lna_cv", "lna_fano", "amount_unit", "time_unit", "level", "replicates", "bootstrap_seed",
] as const;

/**
 * The noise table as CSV: one row per design and species (designs without results yet get one
 * row each with the statistics empty). Amounts in molecules, periods in the model's time unit.
 */
export function noiseTableCsv(c: ComparisonJson): string {
  const rows: (string | number | boolean | null)[][] = [[...NOISE_CSV_HEADER]];
  const results = new Map((c.results?.designs ?? []).map((d) => [d.design_id, d]));
  const r = c.results;
  const iv = (v: IntervalJson | null | undefined) => [v?.value ?? null, v?.lo ?? null, v?.hi ?? null];
  for (const d of c.designs) {
    const res = results.get(d.id);
    const params = Object.entries({ ...d.overrides, ...(d.values ?? {}) }).map(([k, v]) => `${k}=${v}`).join(";");
    const head = [d.label, d.id, d.position, d.circuit_name, d.version_number, d.run?.id ?? null, d.run?.seed ?? null, res?.cells ?? null, params];
    if (!res) {
      rows.push([...head, ...new Array(NOISE_CSV_HEADER.length - head.length).fill(null)]);
      continue;
    }
    for (const s of res.species) {
      rows.push([
        ...head, s.species, ...iv(s.mean), ...iv(s.sd), ...iv(s.cv), ...iv(s.fano), ...iv(s.period_mean), ...iv(s.period_cv),
        s.oscillating ? s.period_count : null, s.lna_cv, s.lna_fano, "molecules", r?.time_unit ?? null, r?.level ?? null, r?.replicates ?? null, r?.bootstrap_seed ?? null,
      ]);
    }
  }
  return toCsv(rows);
}

/** Species present in any design's results, in first-seen order. */
export function resultSpecies(r: ComparisonResultsJson | null): string[] {
  const out: string[] = [];
  for (const d of r?.designs ?? []) for (const s of d.species) if (!out.includes(s.species)) out.push(s.species);
  return out;
}

/** A file-name stem for a comparison's exports: `comparison-12-cv`. */
export const comparisonFileBase = (id: string, what: string) => `comparison-${id}-${what}`;

/** Progress across all designs: chunks done over chunks in all, 1 when succeeded. */
export function comparisonProgress(c: Pick<ComparisonJson, "status" | "designs">): number {
  if (c.status === "succeeded") return 1;
  let done = 0;
  let total = 0;
  for (const d of c.designs) {
    if (!d.run) continue;
    done += d.run.status === "succeeded" ? d.run.chunks_total : d.run.chunks_done;
    total += d.run.chunks_total;
  }
  return total > 0 ? done / total : 0;
}

// ---- charts ---------------------------------------------------------------------------------

const SERIES = ["#b45309", "#1d4e89", "#3f6212", "#8a2d52", "#0f766e", "#4a5568", "#a16207", "#6d28d9"];
const font = { config: { font: "Inter, system-ui, sans-serif", axis: { labelColor: "#4a5568", titleColor: "#1d2433", gridColor: "#ece7df" }, view: { stroke: "#e2ddd4" } } };
const sized = (height: number) => ({ width: "container" as const, height, autosize: { type: "fit-x" as const, contains: "padding" as const } });
const ok = (v: number | null | undefined): v is number => typeof v === "number" && Number.isFinite(v);

export type NoiseMeasure = "cv" | "period_cv" | "fano";
const MEASURE_TITLE: Record<NoiseMeasure, string> = { cv: "CV (SD / mean)", period_cv: "Period CV", fano: "Fano factor (molecules)" };

/**
 * Dot and whisker per design: the estimate with its 95% interval, one row per design, one colour
 * per species (CV, period CV or Fano factor), the LNA prediction as a hollow diamond.
 */
export function intervalSpec(r: ComparisonResultsJson, measure: NoiseMeasure, species: string[]): VisualizationSpec {
  const rows: { design: string; order: number; species: string; value: number; lo: number; hi: number }[] = [];
  const lna: { design: string; species: string; value: number }[] = [];
  for (const d of r.designs) {
    for (const s of d.species) {
      if (!species.includes(s.species)) continue;
      const iv = measure === "cv" ? s.cv : measure === "fano" ? s.fano : s.period_cv;
      if (iv && ok(iv.value)) rows.push({ design: d.label, order: d.position, species: s.species, value: iv.value, lo: ok(iv.lo) ? iv.lo : iv.value, hi: ok(iv.hi) ? iv.hi : iv.value });
      const l = measure === "cv" ? s.lna_cv : measure === "fano" ? s.lna_fano : null;
      if (ok(l)) lna.push({ design: d.label, species: s.species, value: l });
    }
  }
  const order = r.designs.map((d) => d.label);
  const colour = { field: "species", type: "nominal" as const, title: "Species", scale: { domain: species, range: SERIES.slice(0, Math.max(1, species.length)) } };
  const y = { field: "design", type: "nominal" as const, title: null, sort: order, axis: { labelLimit: 220 } };
  const yOffset = { field: "species", type: "nominal" as const, scale: { domain: species } };
  const x = { type: "quantitative" as const, title: `${MEASURE_TITLE[measure]}, ${Math.round(r.level * 100)}% interval over cells`, scale: { zero: false } };
  return {
    ...sized(Math.max(120, order.length * Math.max(22, species.length * 12))), ...font,
    title: { text: `${MEASURE_TITLE[measure]} per design`, subtitle: `Dot: ensemble estimate; whisker: ${Math.round(r.level * 100)}% percentile bootstrap over cells (${r.replicates} replicates)${lna.length ? "; ◇ LNA" : ""}`, anchor: "start" },
    layer: [
      { data: { values: rows }, mark: { type: "rule", strokeWidth: 2 }, encoding: { y, yOffset, x: { field: "lo", ...x }, x2: { field: "hi" }, color: colour } },
      { data: { values: rows }, mark: { type: "point", filled: true, size: 60 }, encoding: { y, yOffset, x: { field: "value", ...x }, color: colour, tooltip: [{ field: "design" }, { field: "species" }, { field: "value", format: ".4~g" }, { field: "lo", format: ".4~g" }, { field: "hi", format: ".4~g" }] } },
      ...(lna.length ? [{ data: { values: lna }, mark: { type: "point" as const, shape: "diamond", filled: false, size: 70, strokeWidth: 1.5 }, encoding: { y, yOffset, x: { field: "value", ...x }, color: colour } }] : []),
    ],
  } as VisualizationSpec;
}

/**
 * A sweep's measure against its first swept parameter (log axis for a log range): estimates with
 * interval bars, joined by a line per species (and per value of a grid's second parameter), and
 * for CV the LNA curve over the same range.
 */
export function sweepSpec(c: Pick<ComparisonJson, "sweep">, r: ComparisonResultsJson, measure: "cv" | "period_cv", species: string): VisualizationSpec | null {
  const axes = c.sweep?.axes ?? [];
  const first = axes[0];
  if (!first) return null;
  const second = axes[1];
  const rows: { x: number; group: string; value: number; lo: number; hi: number }[] = [];
  for (const d of r.designs) {
    const xv = d.values?.[first.parameter];
    const s = d.species.find((q) => q.species === species);
    const iv = measure === "cv" ? s?.cv : s?.period_cv;
    if (!ok(xv) || !iv || !ok(iv.value)) continue;
    const group = second ? `${second.parameter} = ${d.values?.[second.parameter]}` : "ensemble";
    rows.push({ x: xv, group, value: iv.value, lo: ok(iv.lo) ? iv.lo : iv.value, hi: ok(iv.hi) ? iv.hi : iv.value });
  }
  if (!rows.length) return null;
  const curve = measure === "cv" && r.lna_curve
    ? r.lna_curve.points.filter((p) => ok(p.cv[species])).map((p) => ({ x: p.x, group: second ? `${second.parameter} = ${p.group}` : "ensemble", value: p.cv[species] as number }))
    : [];
  const log = first.scale === "log";
  const xEnc = { field: "x", type: "quantitative" as const, title: first.parameter, scale: { type: log ? ("log" as const) : ("linear" as const), zero: false, nice: !log } };
  const yEnc = { type: "quantitative" as const, title: `${species}: ${measure === "cv" ? "CV" : "period CV"}`, scale: { zero: false, nice: !log, type: log ? ("log" as const) : ("linear" as const) } };
  const groups = Array.from(new Set(rows.map((q) => q.group)));
  const colour = { field: "group", type: "nominal" as const, title: second ? second.parameter : null, scale: { domain: groups, range: SERIES }, legend: second ? {} : null };
  return {
    ...sized(260), ...font,
    title: { text: `${species}: ${measure === "cv" ? "CV" : "period CV"} across the sweep of ${first.parameter}`, subtitle: `Ensembles with ${Math.round(r.level * 100)}% intervals${curve.length ? "; dashed: LNA prediction" : ""}${log ? "; log axes" : ""}`, anchor: "start" },
    layer: [
      // The LNA curve dashed; grey on a single sweep (the ensemble line has the colour), per group on a grid.
      ...(curve.length ? [{
        data: { values: curve }, mark: { type: "line" as const, strokeDash: [6, 4], strokeWidth: 1.5, ...(second ? {} : { color: "#4a5568" }) },
        encoding: { x: xEnc, y: { field: "value", ...yEnc }, ...(second ? { color: colour } : {}), detail: { field: "group" } },
      }] : []),
      { data: { values: rows }, mark: { type: "rule", strokeWidth: 2 }, encoding: { x: xEnc, y: { field: "lo", ...yEnc }, y2: { field: "hi" }, color: colour } },
      { data: { values: rows }, mark: { type: "line", point: { filled: true, size: 50 }, strokeWidth: 1 }, encoding: { x: xEnc, y: { field: "value", ...yEnc }, color: colour, tooltip: [{ field: "x", title: first.parameter }, { field: "value", format: ".4~g" }, { field: "lo", format: ".4~g" }, { field: "hi", format: ".4~g" }] } },
    ],
  } as VisualizationSpec;
}

/** Every design's 5–95% band and median of one species, overlaid, one colour per design. */
export function bandsOverlaySpec(b: ComparisonBandsJson): VisualizationSpec {
  const areas: { t: number; design: string; lo: number; hi: number }[] = [];
  const lines: { t: number; design: string; value: number }[] = [];
  for (const d of b.designs) {
    d.times.forEach((t, g) => {
      const lo = d.p05[g], hi = d.p95[g], med = d.p50[g];
      if (ok(lo) && ok(hi)) areas.push({ t, design: d.label, lo, hi });
      if (ok(med)) lines.push({ t, design: d.label, value: med });
    });
  }
  const labels = b.designs.map((d) => d.label);
  const colour = { field: "design", type: "nominal" as const, title: null, scale: { domain: labels, range: SERIES }, legend: { orient: "bottom" as const, direction: "horizontal" as const, columns: 2, labelLimit: 260 } };
  const y = { type: "quantitative" as const, title: `${b.species} (molecules)` };
  return {
    ...sized(280), ...font,
    title: { text: `${b.species}: bands of every design`, subtitle: "Shaded: 5–95% of cells at each time; line: median", anchor: "start" },
    encoding: { x: { field: "t", type: "quantitative", title: `Time (${b.time_unit})` } },
    layer: [
      { data: { values: areas }, mark: { type: "area", opacity: 0.22 }, encoding: { y: { field: "lo", ...y }, y2: { field: "hi" }, color: colour, detail: { field: "design" } } },
      { data: { values: lines }, mark: { type: "line", strokeWidth: 1.8 }, encoding: { y: { field: "value", ...y }, color: colour } },
    ],
  } as VisualizationSpec;
}
