// Laying a measured dataset over a run's charts and noise table. Pure and client-safe: the
// run page fetches GET /api/datasets/:id?values=1 (a DatasetJson) and calls these.
import type { VisualizationSpec } from "vega-embed";

import { histogram, thinIndices, timeFactor, type HistogramBin } from "@/lib/view/datasets";
import type { ColumnStats, DatasetUnits, ParsedDataset, TimeUnit } from "@/lib/schemas/datasets";

/** A dataset as GET /api/datasets/:id returns it (`values` only with ?values=1). */
export interface DatasetJson {
  id: string; lab_id: string; name: string; kind: "series" | "snapshot"; description: string | null;
  file_name: string; content_type: string; size_bytes: number; sha256: string;
  units: DatasetUnits; columns: string[]; time_column: string | null; rows: number;
  stats: ColumnStats[]; warnings: string[]; created_by: string | null; created_at: string;
  values?: ParsedDataset;
}

/**
 * The axes of the run chart the data goes on: its time unit, and whether amounts are molecule
 * counts or the circuit's own amount unit (then `omega`, molecules per amount unit, converts).
 */
export interface OverlayTarget { timeUnit: TimeUnit; amount: "molecules" | "model"; omega?: number }

/** Multiplier from the dataset's stated unit to the target's amount unit. */
export function amountFactor(units: DatasetUnits, target: OverlayTarget): number {
  if (target.amount === "molecules") return units.molecules_per_unit;
  if (!(target.omega && target.omega > 0)) throw new RangeError("overlay: omega (molecules per amount unit) is needed to show data in the circuit's amount unit");
  return units.molecules_per_unit / target.omega;
}

export interface OverlayPoint { t: number; value: number; reporter: string }

/**
 * A time series as points on the run's time axis and amount scale, for `columns` (default:
 * every reporter), at most `maxPoints` per reporter.
 * @throws Error when the dataset is not a series or its values were not fetched.
 */
export function seriesOverlayPoints(ds: DatasetJson, target: OverlayTarget, opts: { columns?: string[]; maxPoints?: number } = {}): OverlayPoint[] {
  const v = ds.values;
  if (!v || v.kind !== "series") throw new Error(`overlay: dataset "${ds.name}" is not a time series with values (fetch it with ?values=1)`);
  const tf = timeFactor(ds.units.time_unit ?? target.timeUnit, target.timeUnit);
  const af = amountFactor(ds.units, target);
  const idx = thinIndices(v.time.length, opts.maxPoints ?? 2000);
  const out: OverlayPoint[] = [];
  v.columns.forEach((c, j) => {
    if (opts.columns && !opts.columns.includes(c)) return;
    for (const i of idx) out.push({ t: v.time[i]! * tf, value: v.values[j]![i]! * af, reporter: c });
  });
  return out;
}

/**
 * A snapshot reporter's histogram on the target amount scale, as a density (integrates to 1)
 * so it sits on the same axis as a simulated stationary distribution; with `edges` the
 * measured values are counted into the run's own bins.
 */
export function snapshotOverlayBins(ds: DatasetJson, column: string, target: OverlayTarget, opts: { bins?: number; edges?: number[] } = {}): HistogramBin[] {
  const v = ds.values;
  if (!v || v.kind !== "snapshot") throw new Error(`overlay: dataset "${ds.name}" is not a snapshot with values (fetch it with ?values=1)`);
  const j = v.columns.indexOf(column);
  if (j < 0) throw new Error(`overlay: dataset "${ds.name}" has no column "${column}"`);
  const af = amountFactor(ds.units, target);
  const xs = v.values[j]!.map((x) => x * af);
  if (!opts.edges) return histogram(xs, opts.bins ?? 30);
  const e = opts.edges;
  const counts = new Array<number>(Math.max(0, e.length - 1)).fill(0);
  for (const x of xs) {
    // Bins are [e_k, e_k+1), the last one closed; values outside the run's range are left out.
    let k = -1;
    let lo = 0;
    let hi = e.length - 1;
    if (x < e[0]! || x > e[hi]!) continue;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (x >= e[mid]!) lo = mid;
      else hi = mid;
    }
    k = lo;
    counts[k]! += 1;
  }
  return counts.map((count, k) => ({ x0: e[k]!, x1: e[k + 1]!, count, density: xs.length ? count / (xs.length * (e[k + 1]! - e[k]!)) : 0 }));
}

export interface MeasuredNoiseRow { reporter: string; n: number; mean: number; sd: number; cv: number | null; fano: number | null; basis: "over time" | "across cells" }

/**
 * The measured rows for a noise table, in molecules (Fano in molecules, like the simulated
 * one). A series' statistics are over its time points; a snapshot's across its cells.
 */
export function measuredNoiseRows(ds: Pick<DatasetJson, "kind" | "stats">): MeasuredNoiseRow[] {
  return ds.stats.map((s) => ({ reporter: s.column, n: s.n, mean: s.mean, sd: s.sd, cv: s.cv, fano: s.fano, basis: ds.kind === "series" ? "over time" : "across cells" }));
}

/** The colour of measured data on every chart (dark, so it stands out from the ochre bands). */
export const MEASURED_COLOUR = "#1d2433";

/**
 * A vega-lite layer drawing measured points (fields t, value, reporter) over a chart whose
 * x is `t` and y is `value`, e.g. `{ ...bandsSpec(...), layer: [...bandsSpec(...).layer, seriesOverlayLayer(points)] }`.
 */
export function seriesOverlayLayer(points: OverlayPoint[], label = "Measured"): Record<string, unknown> {
  return {
    data: { values: points.map((p) => ({ ...p, source: `${label}: ${p.reporter}` })) },
    mark: { type: "point", filled: true, size: 24, opacity: 0.85, color: MEASURED_COLOUR },
    encoding: {
      x: { field: "t", type: "quantitative" }, y: { field: "value", type: "quantitative" },
      shape: { field: "source", type: "nominal", title: null, legend: { orient: "bottom", direction: "horizontal" } },
      tooltip: [{ field: "source", title: "Data" }, { field: "t", title: "Time", format: ".4~g" }, { field: "value", title: "Amount", format: ".4~g" }],
    },
  };
}

/** A vega-lite layer drawing a measured density histogram (fields x0, x1, density) as an outlined step. */
export function snapshotOverlayLayer(bins: HistogramBin[], label = "Measured"): Record<string, unknown> {
  return {
    data: { values: bins.map((b) => ({ ...b, source: label })) },
    mark: { type: "bar", fillOpacity: 0, stroke: MEASURED_COLOUR, strokeWidth: 1.5 },
    encoding: {
      x: { field: "x0", type: "quantitative" }, x2: { field: "x1" }, y: { field: "density", type: "quantitative" },
      tooltip: [{ field: "source", title: "Data" }, { field: "x0", title: "From", format: ".4~g" }, { field: "x1", title: "To", format: ".4~g" }, { field: "count", title: "Cells" }],
    },
  };
}

/** A stand-alone chart of a dataset in molecules (the Data page's view). */
export function datasetChartSpec(ds: DatasetJson, column?: string): VisualizationSpec {
  const target: OverlayTarget = { timeUnit: ds.units.time_unit ?? "min", amount: "molecules" };
  if (ds.kind === "series") {
    const points = seriesOverlayPoints(ds, target);
    return {
      width: "container", height: 260, data: { values: points },
      mark: { type: "line", point: { size: 18 } },
      encoding: {
        x: { field: "t", type: "quantitative", title: `Time (${ds.units.time_unit})` },
        y: { field: "value", type: "quantitative", title: "Amount (molecules)" },
        color: { field: "reporter", type: "nominal", title: "Reporter", scale: { range: ["#b45309", "#3f6212", "#1d4e89", "#8a2d52", "#4a5568"] }, legend: { orient: "bottom", direction: "horizontal" } },
        tooltip: [{ field: "reporter" }, { field: "t", format: ".4~g" }, { field: "value", title: "molecules", format: ".4~g" }],
      },
    } as VisualizationSpec;
  }
  const col = column ?? ds.columns[0]!;
  const bins = snapshotOverlayBins(ds, col, target);
  return {
    width: "container", height: 260, data: { values: bins },
    mark: { type: "bar", color: "#dd9a48", stroke: "#fff", strokeWidth: 0.5 },
    encoding: {
      x: { field: "x0", type: "quantitative", title: `${col} (molecules)`, scale: { zero: false } }, x2: { field: "x1" },
      y: { field: "count", type: "quantitative", title: "Cells" },
      tooltip: [{ field: "x0", title: "From", format: ".4~g" }, { field: "x1", title: "To", format: ".4~g" }, { field: "count", title: "Cells" }],
    },
  } as VisualizationSpec;
}
