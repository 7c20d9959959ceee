"use client";

// What the run page calls to lay a measured dataset over a run: pick a dataset of the lab,
// fetch its values, then use lib/view/dataset-overlay.ts (seriesOverlayPoints + seriesOverlayLayer
// over the bands; snapshotOverlayBins + snapshotOverlayLayer over the stationary histogram;
// measuredNoiseRows beside the noise table, or <MeasuredNoiseTable />).
import useSWR from "swr";

import { measuredNoiseRows, type DatasetJson } from "@/lib/view/dataset-overlay";

async function fetchJson<T>(url: string): Promise<T> {
  const res = await fetch(url);
  const data = (await res.json().catch(() => null)) as (T & { error?: string }) | null;
  if (!res.ok || !data) throw new Error(data?.error ?? `request failed (${res.status})`);
  return data;
}

/** The lab's datasets (without values), newest first. */
export function useLabDatasets(labId: string) {
  return useSWR<{ datasets: DatasetJson[] }>(`/api/datasets?lab_id=${labId}`, fetchJson);
}

/** One dataset with its parsed values (null id: nothing chosen). */
export function useDatasetValues(datasetId: string | null) {
  return useSWR<DatasetJson>(datasetId ? `/api/datasets/${datasetId}?values=1` : null, fetchJson);
}

export interface DatasetOverlayPickerProps {
  labId: string;
  /** Only series (for bands) or only snapshots (for a stationary histogram); both when unset. */
  kind?: "series" | "snapshot";
  value: string | null;
  onChange: (datasetId: string | null) => void;
}

/** A select of the lab's datasets to overlay ("none" clears it). */
export function DatasetOverlayPicker({ labId, kind, value, onChange }: DatasetOverlayPickerProps) {
  const { data, error } = useLabDatasets(labId);
  const options = (data?.datasets ?? []).filter((d) => !kind || d.kind === kind);
  return (
    <label className="flex items-center gap-2 text-sm">
      Measured data
      <select value={value ?? ""} onChange={(e) => onChange(e.target.value || null)} disabled={!data} className="rounded-md border border-ink/25 bg-white px-2 py-1">
        <option value="">{error ? "could not load datasets" : options.length ? "none" : "no datasets in this lab"}</option>
        {options.map((d) => <option key={d.id} value={d.id}>{d.name} ({d.kind === "series" ? "time series" : "snapshot"}: {d.columns.join(", ")})</option>)}
      </select>
    </label>
  );
}

const fmt = (x: number | null, digits = 3) => (x == null ? "—" : Number(x.toPrecision(digits)).toString());

/** The measured mean, SD, CV and Fano (molecules) of a dataset, to sit beside a simulated noise table. */
export function MeasuredNoiseTable({ dataset }: { dataset: Pick<DatasetJson, "name" | "kind" | "stats"> }) {
  const rows = measuredNoiseRows(dataset);
  return (
    <table className="w-full overflow-hidden rounded-lg border border-ink/10 bg-white text-sm">
      <caption className="px-3 py-1 text-left text-ink-soft">Measured: {dataset.name} ({rows[0]?.basis ?? ""}, molecules)</caption>
      <thead className="bg-paper text-left text-ink-soft">
        <tr><th className="px-3 py-1">Reporter</th><th className="px-3 py-1 text-right">n</th><th className="px-3 py-1 text-right">Mean</th><th className="px-3 py-1 text-right">SD</th><th className="px-3 py-1 text-right">CV</th><th className="px-3 py-1 text-right">Fano</th></tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.reporter} className="border-t border-ink/10 tabular-nums">
            <td className="px-3 py-1">{r.reporter}</td><td className="px-3 py-1 text-right">{r.n}</td><td className="px-3 py-1 text-right">{fmt(r.mean, 4)}</td>
            <td className="px-3 py-1 text-right">{fmt(r.sd, 4)}</td><td className="px-3 py-1 text-right">{fmt(r.cv)}</td><td className="px-3 py-1 text-right">{fmt(r.fano)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
