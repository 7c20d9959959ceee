/**
 * Vega-Lite specifications of the run charts: ensemble bands against the mean-field trace, sample
 * cells, a replayed cell, and histograms. Each chart has a title, axis titles with units and a
 * legend. Colours are Burstwise's own (tailwind.config.ts). Pure: data in, JSON out.
 */
import type { VisualizationSpec } from "vega-embed";

import { scheduleMarkTime, scheduleSets, type CellJson, type SummaryJson } from "@/lib/view/run-view";

/** Layer names of the bands chart, in legend order. */
export const BAND_LAYERS = ["5–95% of cells", "25–75% of cells", "Median", "Mean", "Mean-field trace"] as const;
const BAND_COLOURS = ["#f6d5a4", "#dd9a48", "#7c3a05", "#1d2433", "#3f6212"];
/** A qualitative palette for cells and species that stays readable on white. */
export const SERIES_COLOURS = ["#b45309", "#3f6212", "#1d4e89", "#8a2d52", "#4a5568", "#0f766e", "#a16207", "#6d28d9"];

const HEIGHT = 260;
const base = { width: "container" as const, height: HEIGHT, autosize: { type: "fit-x" as const, contains: "padding" as const } };
const font = { config: { font: "Inter, system-ui, sans-serif", axis: { labelColor: "#4a5568", titleColor: "#1d2433", gridColor: "#ece7df" }, view: { stroke: "#e2ddd4" } } };

const isNum = (v: number | null | undefined): v is number => typeof v === "number" && Number.isFinite(v);

/** The colour of scheduled-change marks (violet of SERIES_COLOURS). */
const SCHEDULE_COLOUR = "#6d28d9";

/** One dotted vertical rule per scheduled change that fired, with what it set in the tooltip; none without a schedule. */
export function scheduleLayers(s: Pick<SummaryJson, "schedule">) {
  const rows = (s.schedule ?? []).flatMap((c) => {
    const t = scheduleMarkTime(c);
    return t === null ? [] : [{ t, change: scheduleSets(c), kind: c.when === undefined ? "at" : `mean first firing of "${c.when}"` }];
  });
  const layer = {
    data: { values: rows },
    mark: { type: "rule" as const, strokeDash: [2, 3], strokeWidth: 1.4, color: SCHEDULE_COLOUR },
    encoding: { x: { field: "t", type: "quantitative" as const }, tooltip: [{ field: "t", title: "Scheduled change at" }, { field: "kind", title: "Time" }, { field: "change", title: "Sets" }] },
  };
  return rows.length === 0 ? [] : [layer];
}

const scheduleNote = (s: Pick<SummaryJson, "schedule">) => ((s.schedule?.length ?? 0) > 0 ? "; dotted lines: scheduled changes" : "");

/**
 * Bands of one species: 5–95% and 25–75% areas across cells, the median and mean lines, and the
 * mean-field trace on the same grid, in one layered chart.
 */
export function bandsSpec(s: SummaryJson, species: string, units: { time: string; amount: string }): VisualizationSpec {
  const q = s.quantiles[species];
  const areas: { t: number; layer: string; lo: number; hi: number }[] = [];
  const lines: { t: number; layer: string; value: number }[] = [];
  const trace = s.trace?.[species];
  s.times.forEach((t, g) => {
    const p05 = q?.p05[g], p95 = q?.p95[g], p25 = q?.p25[g], p75 = q?.p75[g];
    if (isNum(p05) && isNum(p95)) areas.push({ t, layer: BAND_LAYERS[0], lo: p05, hi: p95 });
    if (isNum(p25) && isNum(p75)) areas.push({ t, layer: BAND_LAYERS[1], lo: p25, hi: p75 });
    const med = q?.p50[g];
    const mean = s.mean[species]?.[g];
    const mf = trace?.[g];
    if (isNum(med)) lines.push({ t, layer: BAND_LAYERS[2], value: med });
    if (isNum(mean)) lines.push({ t, layer: BAND_LAYERS[3], value: mean });
    if (isNum(mf)) lines.push({ t, layer: BAND_LAYERS[4], value: mf });
  });
  const present = BAND_LAYERS.filter((l) => areas.some((r) => r.layer === l) || lines.some((r) => r.layer === l));
  const colour = {
    field: "layer", type: "nominal" as const, title: null,
    scale: { domain: present, range: present.map((l) => BAND_COLOURS[BAND_LAYERS.indexOf(l)]) },
    legend: { orient: "bottom" as const, direction: "horizontal" as const, symbolType: "square" },
  };
  const y = { type: "quantitative" as const, title: `${species} (${units.amount})` };
  const byLayer = (name: string) => ({ filter: { field: "layer", equal: name } });
  return {
    ...base, ...font,
    title: { text: `${species}: ${s.runs} cells against the mean-field trace`, subtitle: `Bands across cells at each time; ${s.method === "tau" ? "tau-leaping" : "direct Gillespie"}, seed ${s.seed ?? "—"}${scheduleNote(s)}`, anchor: "start" },
    encoding: { x: { field: "t", type: "quantitative", title: `Time (${units.time})` } },
    layer: [
      { data: { values: areas }, transform: [byLayer(BAND_LAYERS[0])], mark: { type: "area", opacity: 0.7 }, encoding: { y: { field: "lo", ...y }, y2: { field: "hi" }, color: colour } },
      { data: { values: areas }, transform: [byLayer(BAND_LAYERS[1])], mark: { type: "area", opacity: 0.6 }, encoding: { y: { field: "lo", ...y }, y2: { field: "hi" }, color: colour } },
      {
        data: { values: lines }, mark: { type: "line", strokeWidth: 1.8 },
        encoding: {
          y: { field: "value", ...y }, color: colour,
          strokeDash: { field: "layer", type: "nominal", legend: null, scale: { domain: [BAND_LAYERS[2], BAND_LAYERS[3], BAND_LAYERS[4]], range: [[1, 0], [5, 3], [1, 0]] } },
          strokeWidth: { field: "layer", type: "nominal", legend: null, scale: { domain: [BAND_LAYERS[2], BAND_LAYERS[3], BAND_LAYERS[4]], range: [1.6, 1.6, 2.6] } },
        },
      },
      ...scheduleLayers(s),
    ],
  } as VisualizationSpec;
}

/** A deterministic trace run: every species' path in one chart. */
export function traceSpec(s: SummaryJson, units: { time: string; amount: string }): VisualizationSpec {
  const rows: { t: number; species: string; value: number }[] = [];
  const path = s.trace ?? s.mean;
  for (const sp of s.species) s.times.forEach((t, g) => { const v = path[sp]?.[g]; if (isNum(v)) rows.push({ t, species: sp, value: v }); });
  return {
    ...base, ...font,
    title: { text: "Mean-field trace", subtitle: `Deterministic rate equations (ODE) on the sampling grid${scheduleNote(s)}`, anchor: "start" },
    encoding: { x: { field: "t", type: "quantitative", title: `Time (${units.time})` } },
    layer: [
      {
        data: { values: rows }, mark: { type: "line", strokeWidth: 2 },
        encoding: {
          y: { field: "value", type: "quantitative", title: `Amount (${units.amount})` },
          color: { field: "species", type: "nominal", title: "Species", scale: { range: SERIES_COLOURS }, legend: { orient: "bottom", direction: "horizontal" } },
        },
      },
      ...scheduleLayers(s),
    ],
  } as VisualizationSpec;
}

/** One species in a few cells of the ensemble (thin lines, one colour per cell), the ensemble mean dashed. */
export function cellsSpec(cells: CellJson[], species: string, units: { time: string; amount: string }, mean?: { times: number[]; values: (number | null)[] }): VisualizationSpec {
  const rows: { t: number; series: string; value: number }[] = [];
  for (const c of cells) c.times.forEach((t, g) => { const v = c.values[species]?.[g]; if (isNum(v)) rows.push({ t, series: `Cell ${c.index}`, value: v }); });
  if (mean) mean.times.forEach((t, g) => { const v = mean.values[g]; if (isNum(v)) rows.push({ t, series: "Ensemble mean", value: v }); });
  const names = [...cells.map((c) => `Cell ${c.index}`), ...(mean ? ["Ensemble mean"] : [])];
  const range = [...cells.map((_, k) => SERIES_COLOURS[k % SERIES_COLOURS.length]), ...(mean ? ["#1d2433"] : [])];
  return {
    ...base, ...font,
    title: { text: `${species} in ${cells.length} sample cell${cells.length === 1 ? "" : "s"}`, subtitle: `Cells replayed from seed ${cells[0]?.seed ?? "—"}`, anchor: "start" },
    data: { values: rows }, mark: { type: "line", strokeWidth: 1.2, interpolate: "step-after" },
    encoding: {
      x: { field: "t", type: "quantitative", title: `Time (${units.time})` },
      y: { field: "value", type: "quantitative", title: `${species} (${units.amount})` },
      color: { field: "series", type: "nominal", title: null, scale: { domain: names, range }, legend: { orient: "bottom", direction: "horizontal" } },
      strokeDash: { field: "series", type: "nominal", legend: null, scale: { domain: names, range: names.map((n) => (n === "Ensemble mean" ? [5, 3] : [1, 0])) } },
    },
  } as VisualizationSpec;
}

/** Every species of one replayed cell. */
export function replaySpec(cell: CellJson, units: { time: string; amount: string }): VisualizationSpec {
  const rows: { t: number; species: string; value: number }[] = [];
  for (const sp of cell.species) cell.times.forEach((t, g) => { const v = cell.values[sp]?.[g]; if (isNum(v)) rows.push({ t, species: sp, value: v }); });
  return {
    ...base, ...font,
    title: { text: `Cell #${cell.index}, replayed from seed ${cell.seed}`, subtitle: `${cell.events.toLocaleString("en-US")} reaction events`, anchor: "start" },
    data: { values: rows }, mark: { type: "line", strokeWidth: 1.4, interpolate: "step-after" },
    encoding: {
      x: { field: "t", type: "quantitative", title: `Time (${units.time})` },
      y: { field: "value", type: "quantitative", title: `Amount (${units.amount})` },
      color: { field: "species", type: "nominal", title: "Species", scale: { range: SERIES_COLOURS }, legend: { orient: "bottom", direction: "horizontal" } },
    },
  } as VisualizationSpec;
}

/**
 * A histogram from bin edges and counts, with an optional rule at the mean. `xTitle` carries the
 * unit; `what` names the bars in the legend.
 */
export function histogramSpec(h: { edges: number[]; counts: number[] }, o: { title: string; subtitle?: string; xTitle: string; what: string; mean?: number | null }): VisualizationSpec {
  const bars = h.counts.map((count, b) => ({ x0: h.edges[b], x1: h.edges[b + 1], count, layer: o.what }));
  const barLayer = {
    // A rect from (x0, 0) to (x1, count): bins of any width, drawn upright.
    data: { values: bars }, mark: { type: "rect" as const, stroke: "#ffffff", strokeWidth: 0.5 },
    encoding: {
      x: { field: "x0", type: "quantitative" as const, title: o.xTitle, scale: { zero: false } }, x2: { field: "x1" },
      y: { field: "count", type: "quantitative" as const, title: "Count" }, y2: { datum: 0 },
      color: { field: "layer", type: "nominal" as const, title: null, scale: { domain: [o.what, "Mean"], range: ["#dd9a48", "#1d2433"] }, legend: { orient: "bottom" as const, direction: "horizontal" as const } },
    },
  };
  const meanLayer = {
    data: { values: [{ x: o.mean, layer: "Mean" }] }, mark: { type: "rule" as const, strokeWidth: 2, strokeDash: [5, 3] },
    encoding: { x: { field: "x", type: "quantitative" as const }, color: { field: "layer", type: "nominal" as const } },
  };
  return {
    ...base, ...font, height: 220, title: { text: o.title, ...(o.subtitle ? { subtitle: o.subtitle } : {}), anchor: "start" },
    layer: isNum(o.mean) ? [barLayer, meanLayer] : [barLayer],
  } as VisualizationSpec;
}

/**
 * The simulated stationary distribution and a measured snapshot on one density axis (each
 * integrates to 1), so their shapes compare whatever the number of cells; `measured` holds the
 * measured densities in the same bins (lib/dataset-overlay.ts snapshotOverlayBins with `edges`).
 */
export function distributionVersusMeasuredSpec(
  h: { edges: number[]; counts: number[] },
  measured: { x0: number; x1: number; density: number; count: number }[],
  o: { title: string; subtitle?: string; xTitle: string; measuredLabel: string },
): VisualizationSpec {
  const total = h.counts.reduce((a, b) => a + b, 0);
  const simulated = h.counts.map((count, b) => ({
    x0: h.edges[b], x1: h.edges[b + 1], density: total ? count / (total * (h.edges[b + 1]! - h.edges[b]!)) : 0, layer: "Simulated (all cells)",
  }));
  const colour = { field: "layer", type: "nominal" as const, title: null, scale: { domain: ["Simulated (all cells)", o.measuredLabel], range: ["#dd9a48", "#1d2433"] }, legend: { orient: "bottom" as const, direction: "horizontal" as const } };
  return {
    ...base, ...font, height: 220, title: { text: o.title, ...(o.subtitle ? { subtitle: o.subtitle } : {}), anchor: "start" },
    layer: [
      {
        data: { values: simulated }, mark: { type: "rect", stroke: "#ffffff", strokeWidth: 0.5 },
        encoding: { x: { field: "x0", type: "quantitative", title: o.xTitle, scale: { zero: false } }, x2: { field: "x1" }, y: { field: "density", type: "quantitative", title: "Density" }, y2: { datum: 0 }, color: colour },
      },
      {
        data: { values: measured.map((m) => ({ ...m, layer: o.measuredLabel })) }, mark: { type: "rect", fillOpacity: 0, strokeWidth: 1.6 },
        encoding: { x: { field: "x0", type: "quantitative" }, x2: { field: "x1" }, y: { field: "density", type: "quantitative" }, y2: { datum: 0 }, stroke: colour },
      },
    ],
  } as unknown as VisualizationSpec;
}
