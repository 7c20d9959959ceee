import type { Metadata } from "next";
import Link from "next/link";

import { ComparisonStatusBadge } from "@/app/_components/comparison-status";
import { EmptyState } from "@/app/_components/empty-state";
import { RunProgressBar, When } from "@/app/_components/run-status";
import { TableHead } from "@/app/_components/table-head";
import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { listComparisons } from "@/lib/data/comparisons";

export const metadata: Metadata = { title: "Comparisons" };

const one = (v: string | string[] | undefined) => (typeof v === "string" ? v : undefined);
const PAGE_SIZE = 25;

export default async function ComparisonsPage({ params, searchParams }: {
  params: Promise<{ labId: string }>; searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const { labId } = await params;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/comparisons`);
  const canWrite = may(lab.role, "comparison:write");
  const page = Math.max(1, Math.min(10_000, Number.parseInt(one((await searchParams).page) ?? "1", 10) || 1));
  const { comparisons, total } = await listComparisons(labId, { limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE });
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));
  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="text-2xl font-semibold">Comparisons</h1>
          <p className="mt-1 max-w-3xl text-sm text-ink-soft">Designs, or a sweep of one or two parameters, run with the same settings: CV, Fano factor and period precision side by side with bootstrap intervals over cells.</p>
        </div>
        {canWrite ? (
          <Link href={`/labs/${labId}/comparisons/new`} className="rounded-md bg-ochre px-3 py-2 text-sm font-medium text-white no-underline hover:bg-ochre-dark">
            New comparison
          </Link>
        ) : (
          <p className="text-sm text-ink-soft">Read-only: a reviewer opens every comparison and downloads its tables and charts.</p>
        )}
      </div>
      {total === 0 ? (
        <EmptyState title="No comparisons yet">
          <p>A comparison runs two or more designs, or a sweep of one or two parameters, with the same settings, and sets their CV, Fano factor and period precision side by side with confidence intervals.</p>
          {canWrite && <p className="mt-2"><Link href={`/labs/${labId}/comparisons/new`}>Set up the first comparison</Link></p>}
        </EmptyState>
      ) : (
        <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
          <table className="w-full min-w-[44rem] text-sm" aria-label="Comparisons">
            <TableHead columns={["Comparison", "Status", { label: "Designs", numeric: true }, "Cells each", "Progress", "Created"]} />
            <tbody>
              {comparisons.map((c) => {
                const progress = c.status === "succeeded" ? 1 : c.chunksTotal > 0 ? c.chunksDone / c.chunksTotal : 0;
                return (
                  <tr key={c.id} className="border-t border-ink/10 align-top">
                    <td className="px-3 py-2">
                      <Link href={`/labs/${labId}/comparisons/${c.id}`} className="font-medium">{c.name}</Link>
                      <div className="text-xs text-ink-soft">{c.kind === "sweep" ? "Sweep" : "Designs"} · #{c.id}{c.commonSeed ? " · common seed" : ""}</div>
                    </td>
                    <td className="px-3 py-2"><ComparisonStatusBadge status={c.status} /></td>
                    <td className="px-3 py-2 text-right tabular-nums">{c.designs}</td>
                    <td className="px-3 py-2 tabular-nums">{c.settings.runs.toLocaleString("en-US")} · {c.settings.method === "tau" ? "tau-leaping" : "Gillespie"}</td>
                    <td className="w-40 px-3 py-2">
                      {c.status === "draft" ? <span className="text-ink-soft">not launched</span> : <RunProgressBar value={progress} label={`Progress of ${c.name}`} className="mt-1.5" />}
                    </td>
                    <td className="px-3 py-2 text-ink-soft"><When iso={new Date(c.createdAt).toISOString()} /><div className="text-xs">{c.createdByEmail ?? "—"}</div></td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
      {pages > 1 && (
        <nav aria-label="Pages" className="flex gap-3 text-sm">
          {page > 1 && <Link href={`/labs/${labId}/comparisons?page=${page - 1}`}>← Newer</Link>}
          <span className="text-ink-soft">Page {page} of {pages}</span>
          {page < pages && <Link href={`/labs/${labId}/comparisons?page=${page + 1}`}>Older →</Link>}
        </nav>
      )}
    </div>
  );
}
