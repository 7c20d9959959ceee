"use client";

import Link from "next/link";
import { useRouter } from "next/navigation";
import useSWR from "swr";

import { EmptyState } from "@/app/_components/empty-state";
import { jsonFetcher } from "@/app/_components/run-api";
import { RunProgressBar, RunStatusBadge, When, runKindLabel } from "@/app/_components/run-status";
import { TableHead } from "@/app/_components/table-head";
import { formatCount, formatDuration, isActive, type RunJson } from "@/lib/view/run-view";

const PAGE_SIZE = 25;
const STATUSES = ["queued", "running", "succeeded", "failed", "cancelled"] as const;

export interface RunsTableProps {
  labId: string; canLaunch: boolean; status?: string; circuit?: string; page: number;
}

interface RunsPage { runs: RunJson[]; total: number }
interface CircuitsList { circuits: { id: string; name: string }[] }

/** The lab's runs with status and circuit filters and pages of 25; live while any shown run is active. */
export function RunsTable({ labId, canLaunch, status, circuit, page }: RunsTableProps) {
  const router = useRouter();
  const query = new URLSearchParams({ lab_id: labId, limit: String(PAGE_SIZE), offset: String((page - 1) * PAGE_SIZE) });
  if (status) query.set("status", status);
  if (circuit) query.set("circuit_id", circuit);
  const { data, error, isLoading } = useSWR<RunsPage>(`/api/runs?${query}`, jsonFetcher, {
    refreshInterval: (d) => (d?.runs.some((r) => isActive(r.status)) ? 2000 : 0),
    keepPreviousData: true,
  });
  const { data: circuits } = useSWR<CircuitsList>(`/api/circuits?lab_id=${labId}&limit=200`, jsonFetcher);

  const go = (next: { status?: string; circuit?: string; page?: number }) => {
    const p = new URLSearchParams();
    const s = "status" in next ? next.status : status;
    const c = "circuit" in next ? next.circuit : circuit;
    if (s) p.set("status", s);
    if (c) p.set("circuit", c);
    if (next.page && next.page > 1) p.set("page", String(next.page));
    router.push(`/labs/${labId}/runs${p.size ? `?${p}` : ""}`);
  };

  const filtered = Boolean(status || circuit);
  const total = data?.total ?? 0;
  const first = total ? (page - 1) * PAGE_SIZE + 1 : 0;
  const last = Math.min(total, page * PAGE_SIZE);
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));

  return (
    <div className="flex flex-col gap-3">
      <form className="flex flex-wrap items-end gap-3 text-sm" onSubmit={(e) => e.preventDefault()} aria-label="Filter runs">
        <div className="flex flex-col gap-1">
          <label htmlFor="filter-status" className="font-medium">Status</label>
          <select id="filter-status" value={status ?? ""} onChange={(e) => go({ status: e.target.value || undefined, page: 1 })}
            className="rounded-md border border-ink/25 bg-white px-2 py-1.5">
            <option value="">All statuses</option>
            {STATUSES.map((s) => <option key={s} value={s}>{s}</option>)}
          </select>
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="filter-circuit" className="font-medium">Circuit</label>
          <select id="filter-circuit" value={circuit ?? ""} onChange={(e) => go({ circuit: e.target.value || undefined, page: 1 })}
            className="max-w-[16rem] rounded-md border border-ink/25 bg-white px-2 py-1.5">
            <option value="">All circuits</option>
            {circuit && !circuits?.circuits.some((c) => c.id === circuit) && <option value={circuit}>Circuit {circuit}</option>}
            {circuits?.circuits.map((c) => <option key={c.id} value={c.id}>{c.name}</option>)}
          </select>
        </div>
        {filtered && (
          <button type="button" onClick={() => go({ status: undefined, circuit: undefined, page: 1 })} className="py-1.5 text-ochre-dark hover:underline">
            Clear filters
          </button>
        )}
      </form>

      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">The runs could not be loaded: {error.message}</p>}

      {isLoading && !data ? (
        <div aria-busy="true" aria-label="Loading runs" className="flex flex-col gap-2">
          {Array.from({ length: 5 }, (_, k) => <div key={k} className="h-10 animate-pulse rounded bg-ink/5" />)}
        </div>
      ) : data && data.runs.length === 0 ? (
        filtered ? (
          <EmptyState title="No runs match these filters"><p>Clear the filters to see every run of the lab.</p></EmptyState>
        ) : (
          <EmptyState title="No runs yet">
            <p>A run is either a trace (the deterministic mean-field path) or an ensemble (a seeded Gillespie simulation of many cells). Finished ensembles show their bands against the trace, the noise table and the period spread.</p>
            {canLaunch && <p className="mt-3"><Link href={`/labs/${labId}/runs/new`}>Launch the first run</Link></p>}
          </EmptyState>
        )
      ) : data ? (
        <>
          <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
            <table className="w-full min-w-[44rem] text-sm">
              <caption className="sr-only">Runs of this lab</caption>
              <TableHead columns={["Run", "Circuit", "Kind", { label: "Cells", numeric: true, className: "whitespace-nowrap" }, "Status", "Launched by", "Launched", { label: "Wall time", numeric: true, className: "whitespace-nowrap" }]} />
              <tbody>
                {data.runs.map((r) => (
                  <tr key={r.id} className="border-t border-ink/10 align-top">
                    <td className="px-3 py-2 font-medium"><Link href={`/labs/${labId}/runs/${r.id}`}>#{r.id}</Link></td>
                    <td className="px-3 py-2">{r.circuit_name} <span className="text-ink-soft">v{r.version_number}</span></td>
                    <td className="px-3 py-2 text-ink-soft">{runKindLabel(r)}</td>
                    <td className="whitespace-nowrap px-3 py-2 text-right tabular-nums">{r.kind === "trace" ? "—" : formatCount(r.settings.runs)}</td>
                    <td className="px-3 py-2">
                      <div className="flex min-w-[7rem] flex-col items-start gap-1">
                        <RunStatusBadge status={r.status} />
                        {isActive(r.status) && <RunProgressBar value={r.progress} label={`Progress of run ${r.id}`} className="w-28" />}
                      </div>
                    </td>
                    <td className="px-3 py-2 text-ink-soft">{r.created_by ?? "—"}</td>
                    <td className="px-3 py-2 text-ink-soft"><When iso={r.created_at} /></td>
                    <td className="px-3 py-2 text-right tabular-nums text-ink-soft">{r.wall_s == null ? "—" : formatDuration(r.wall_s)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <nav aria-label="Pages of runs" className="flex flex-wrap items-center justify-between gap-2 text-sm text-ink-soft">
            <span>{first}–{last} of {total} run{total === 1 ? "" : "s"}</span>
            <span className="flex items-center gap-2">
              <button type="button" disabled={page <= 1} onClick={() => go({ page: page - 1 })}
                className="rounded-md border border-ink/20 bg-white px-3 py-1 text-ink disabled:opacity-40">Previous</button>
              <span>Page {page} of {pages}</span>
              <button type="button" disabled={page >= pages} onClick={() => go({ page: page + 1 })}
                className="rounded-md border border-ink/20 bg-white px-3 py-1 text-ink disabled:opacity-40">Next</button>
            </span>
          </nav>
        </>
      ) : null}
    </div>
  );
}
