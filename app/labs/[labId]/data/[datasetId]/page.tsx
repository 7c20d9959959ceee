import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { getDataset } from "@/lib/data/datasets";
import { datasetChartSpec } from "@/lib/view/dataset-overlay";
import { formatBytes } from "@/lib/view/datasets";

import { DatasetChart } from "../dataset-chart";
import { DeleteDatasetButton } from "../upload-forms";

export const metadata: Metadata = { title: "Dataset" };

/** A full stop after text that may already end in one (a unit such as "a.u."). */
const endSentence = (s: string) => (s.endsWith(".") ? s : `${s}.`);
const fmt = (x: number | null, digits = 4) => (x == null ? "—" : Number(x.toPrecision(digits)).toLocaleString("en", { maximumFractionDigits: 6 }));

export default async function DatasetPage({ params, searchParams }: { params: Promise<{ labId: string; datasetId: string }>; searchParams: Promise<{ column?: string }> }) {
  const { labId, datasetId } = await params;
  const { column } = await searchParams;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/data/${datasetId}`);
  const role = lab.role;
  if (!/^[1-9][0-9]{0,15}$/.test(datasetId)) notFound();
  const ds = await getDataset(datasetId, { values: true });
  if (!ds || ds.lab_id !== labId) notFound();
  const shown = ds.kind === "snapshot" && column && ds.columns.includes(column) ? column : ds.columns[0]!;
  // The chart gets a thinned series (≤ 2,000 points per reporter) or 30 histogram bins, not the raw values.
  const spec = datasetChartSpec(ds, shown);
  const { values: _values, ...meta } = ds;
  const u = meta.units;
  return (
    <div className="flex flex-col gap-6">
      <div>
        <Link href={`/labs/${labId}/data`} className="text-sm">← Data</Link>
        <h1 className="mt-1 text-2xl font-semibold">{meta.name}</h1>
        <p className="mt-1 text-ink-soft">
          {meta.kind === "series" ? `Time series: ${meta.rows} time points, time in ${u.time_unit}` : `Single-cell snapshot: ${meta.rows} cells`}
          {"; "}{endSentence(`amounts in ${u.amount_unit}${u.molecules_per_unit !== 1 || !/^molecules?$/i.test(u.amount_unit) ? `, ${u.molecules_per_unit} molecules per ${u.amount_unit}` : ""}`)}
          {" "}Uploaded by {meta.created_by ?? "a former member"} on {meta.created_at.slice(0, 16).replace("T", " ")} UTC.
        </p>
        {meta.description && <p className="mt-1 text-sm">{meta.description}</p>}
      </div>
      <div className="flex flex-wrap items-center gap-4 text-sm">
        <a href={`/api/datasets/${meta.id}/file`} download className="rounded-md border border-ink/20 bg-white px-3 py-1.5 no-underline">Download {meta.file_name} ({formatBytes(meta.size_bytes)})</a>
        <span className="text-ink-soft">sha256 {meta.sha256.slice(0, 12)}…</span>
        {may(role, "delete") && <DeleteDatasetButton labId={labId} datasetId={meta.id} name={meta.name} />}
      </div>
      {meta.kind === "snapshot" && meta.columns.length > 1 && (
        <nav aria-label="Reporter" className="flex gap-2 text-sm">
          {meta.columns.map((c) => (
            <Link key={c} href={`?column=${encodeURIComponent(c)}`} aria-current={c === shown ? "true" : undefined}
              className={`rounded-full px-3 py-0.5 no-underline ${c === shown ? "bg-ochre text-white" : "bg-white text-ink"}`}>{c}</Link>
          ))}
        </nav>
      )}
      <DatasetChart spec={spec} label={meta.kind === "series" ? `${meta.name}: amounts over time, in molecules` : `${meta.name}: ${shown} across cells, in molecules`} />
      <section className="flex flex-col gap-2">
        <h2 className="text-lg font-semibold">Measured spread (molecules)</h2>
        <p className="text-sm text-ink-soft">
          {endSentence(`Values × ${u.molecules_per_unit} molecules per ${u.amount_unit}`)} {meta.kind === "series"
            ? "For a time series the statistics are over its time points (a single cell's fluctuation in time, or a population mean's drift)."
            : "Across cells: mean, sample SD (n − 1), CV = SD/mean and Fano factor = variance/mean, the same definitions as a run's noise table."}
        </p>
        <table className="w-full overflow-hidden rounded-lg border border-ink/10 bg-white text-sm">
          <caption className="sr-only">Measured statistics</caption>
          <thead className="bg-paper text-left text-ink-soft">
            <tr><th className="px-3 py-2">Reporter</th><th className="px-3 py-2 text-right">n</th><th className="px-3 py-2 text-right">Mean</th><th className="px-3 py-2 text-right">SD</th><th className="px-3 py-2 text-right">CV</th><th className="px-3 py-2 text-right">Fano</th></tr>
          </thead>
          <tbody>
            {meta.stats.map((s) => (
              <tr key={s.column} className="border-t border-ink/10 tabular-nums">
                <td className="px-3 py-2">{s.column}</td><td className="px-3 py-2 text-right">{s.n}</td><td className="px-3 py-2 text-right">{fmt(s.mean)}</td>
                <td className="px-3 py-2 text-right">{fmt(s.sd)}</td><td className="px-3 py-2 text-right">{fmt(s.cv, 3)}</td><td className="px-3 py-2 text-right">{fmt(s.fano, 3)}</td>
              </tr>
            ))}
          </tbody>
        </table>
        {meta.warnings.length > 0 && <ul className="list-disc pl-5 text-sm text-ink-soft">{meta.warnings.map((w) => <li key={w}>{w}</li>)}</ul>}
      </section>
    </div>
  );
}
