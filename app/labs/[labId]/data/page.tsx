import type { Metadata } from "next";
import Link from "next/link";

import { EmptyState } from "@/app/_components/empty-state";
import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { listDatasets } from "@/lib/data/datasets";
import { formatBytes } from "@/lib/view/datasets";
import { DATASET_LIMITS } from "@/lib/schemas/datasets";

import { CircuitUploadForm, DatasetUploadForm } from "./upload-forms";

export const metadata: Metadata = { title: "Data" };

const fmt = (x: number | null) => (x == null ? "—" : Number(x.toPrecision(3)).toString());

export default async function DataPage({ params }: { params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/data`);
  const role = lab.role;
  const datasets = await listDatasets(labId);
  const canUpload = may(role, "data:write");
  return (
    <div className="flex flex-col gap-6">
      <div>
        <h1 className="text-2xl font-semibold">Data</h1>
        <p className="mt-1 text-ink-soft">
          Measured time series and single-cell snapshots, kept exactly as uploaded, with their spread in molecules to set
          beside a simulation&apos;s CV and Fano factor.
          {!canUpload && " You can read and download them; uploading is for owners and modelers."}
        </p>
      </div>
      {datasets.length === 0 ? (
        <EmptyState title="No datasets yet">
          <p>Datasets are measured time series or single-cell snapshots (for example fluorescence with a molecules-per-unit factor) that you lay over a simulation to compare its spread with the bench.</p>
        </EmptyState>
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full overflow-hidden rounded-lg border border-ink/10 bg-white text-sm">
            <caption className="sr-only">Datasets</caption>
            <thead className="bg-paper text-left text-ink-soft">
              <tr>
                <th className="px-3 py-2">Name</th><th className="px-3 py-2">Kind</th><th className="px-3 py-2">Reporters</th>
                <th className="px-3 py-2 text-right">Rows</th><th className="px-3 py-2 text-right">CV</th><th className="px-3 py-2">Uploaded</th><th className="px-3 py-2">File</th>
              </tr>
            </thead>
            <tbody>
              {datasets.map((d) => (
                <tr key={d.id} className="border-t border-ink/10">
                  <td className="px-3 py-2"><Link href={`/labs/${labId}/data/${d.id}`}>{d.name}</Link></td>
                  <td className="px-3 py-2">{d.kind === "series" ? "time series" : "snapshot"}</td>
                  <td className="px-3 py-2">{d.columns.join(", ")}</td>
                  <td className="px-3 py-2 text-right tabular-nums">{d.rows}</td>
                  <td className="px-3 py-2 text-right tabular-nums">{d.stats.map((s) => fmt(s.cv)).join(" · ")}</td>
                  <td className="px-3 py-2 text-ink-soft">{d.created_by ?? "—"}, {d.created_at.slice(0, 10)}</td>
                  <td className="px-3 py-2"><a href={`/api/datasets/${d.id}/file`} download>{d.file_name}</a> <span className="text-ink-soft">({formatBytes(d.size_bytes)})</span></td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      {canUpload && (
        <div className="grid gap-4 lg:grid-cols-[3fr_2fr]">
          <DatasetUploadForm labId={labId} />
          <CircuitUploadForm labId={labId} />
        </div>
      )}
      <p className="text-xs text-ink-soft">
        Limits: datasets up to {formatBytes(DATASET_LIMITS.maxFileBytes)}, {DATASET_LIMITS.maxRows.toLocaleString("en")} rows and {DATASET_LIMITS.maxColumns} columns;
        circuit files up to {formatBytes(DATASET_LIMITS.maxCircuitFileBytes)}. CSV with a header row; comma, tab or semicolon between values; UTF-8.
      </p>
    </div>
  );
}
