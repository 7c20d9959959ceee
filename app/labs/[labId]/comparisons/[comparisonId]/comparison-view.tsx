"use client";

import Link from "next/link";
import { useRouter } from "next/navigation";
import { useState } from "react";
import useSWR from "swr";

import { Caution } from "@/app/_components/caution";
import { ComparisonStatusBadge } from "@/app/_components/comparison-status";
import { fetchJson, jsonFetcher } from "@/app/_components/run-api";
import { RunProgressBar, When } from "@/app/_components/run-status";
import { TableHead } from "@/app/_components/table-head";
import { WarningList } from "@/app/_components/warning-list";
import { resultSpecies, type ComparisonJson } from "@/lib/view/comparison-view";
import { formatNumber } from "@/lib/view/run-view";

import { ComparisonCharts } from "./comparison-charts";
import { DifferenceTest } from "./difference-test";
import { NoiseTable } from "./noise-table";

export interface ComparisonViewProps {
  labId: string; initial: ComparisonJson; canLaunch: boolean; canCancel: boolean; canDelete: boolean; role: string;
}

const button = "rounded-md border px-3 py-1.5 text-sm disabled:opacity-50";

/** Every design run's warnings, each message led by the design it concerns. */
function designWarnings(c: ComparisonJson) {
  return (c.results?.designs ?? []).flatMap((d) => (d.warnings ?? []).map((w) => ({ ...w, message: `${d.label}: ${w.message}` })));
}

/** A comparison: settings, progress across every design, then the noise table, charts and the difference test. */
export function ComparisonView({ labId, initial, canLaunch, canCancel, canDelete, role }: ComparisonViewProps) {
  const router = useRouter();
  const { data, mutate } = useSWR<ComparisonJson>(`/api/comparisons/${initial.id}`, jsonFetcher, {
    // With fallback data swr neither revalidates on mount nor hands it to refreshInterval: say both.
    fallbackData: initial,
    revalidateOnMount: initial.status === "running",
    refreshInterval: (d) => ((d ?? initial).status === "running" ? 1500 : 0),
  });
  const c = data ?? initial;
  const [busy, setBusy] = useState(false);
  const [actionError, setActionError] = useState<string | null>(null);
  const species = resultSpecies(c.results);
  const [chosen, setChosen] = useState<string | null>(null);
  const current = chosen && species.includes(chosen) ? chosen : (pickSpecies(c) ?? species[0] ?? null);

  const act = async (path: string, method = "POST") => {
    setBusy(true);
    setActionError(null);
    try {
      await fetchJson(path, { method });
      if (method === "DELETE") {
        router.push(`/labs/${labId}/comparisons`);
        return;
      }
      await mutate();
    } catch (e) {
      setActionError(e instanceof Error ? e.message : String(e));
    } finally {
      setBusy(false);
    }
  };

  const s = c.settings;
  return (
    <div className="flex flex-col gap-6">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <p className="text-sm"><Link href={`/labs/${labId}/comparisons`}>← Comparisons</Link></p>
          <h1 className="mt-1 flex flex-wrap items-center gap-3 text-2xl font-semibold">{c.name} <ComparisonStatusBadge status={c.status} /></h1>
          {c.description && <p className="mt-1 max-w-3xl text-sm text-ink-soft">{c.description}</p>}
          <p className="mt-2 text-sm text-ink-soft" data-testid="comparison-settings">
            {c.kind === "sweep" ? `Sweep of ${(c.sweep?.axes ?? []).map((a) => a.parameter).join(" × ")}${c.sweep?.axes[0]?.scale === "log" ? " (log range)" : ""}` : "Designs listed"} · {c.designs.length} designs · {s.runs.toLocaleString("en-US")} cells each ·{" "}
            {s.method === "tau" ? "tau-leaping" : "direct Gillespie"} · t = 0…{formatNumber(s.t_end)}, step {formatNumber(s.dt)}
            {s.burn_in !== undefined ? `, burn-in ${formatNumber(s.burn_in)}` : ", burn-in t_end/5"} ·{" "}
            {c.common_seed ? <>common seed {c.seed}</> : <>seeds {c.seed} + design position</>} · #{c.id} by {c.created_by ?? "—"}, <When iso={c.created_at} />
          </p>
        </div>
        <div className="flex flex-wrap gap-2">
          {canLaunch && ["draft", "failed", "cancelled"].includes(c.status) && (
            <button type="button" disabled={busy} onClick={() => void act(`/api/comparisons/${c.id}/launch`)} className={`${button} border-ochre bg-ochre font-medium text-white hover:bg-ochre-dark`}>
              {c.status === "draft" ? "Run all designs" : "Run again"}
            </button>
          )}
          {canCancel && c.status === "running" && (
            <button type="button" disabled={busy} onClick={() => void act(`/api/comparisons/${c.id}/cancel`)} className={`${button} border-ink/20 bg-white hover:border-red-400`}>Cancel</button>
          )}
          {canDelete && c.status !== "running" && (
            <button type="button" disabled={busy} onClick={() => { if (window.confirm(`Delete comparison "${c.name}"? Its runs stay in Runs.`)) void act(`/api/comparisons/${c.id}`, "DELETE"); }}
              className={`${button} border-ink/20 bg-white text-red-800 hover:border-red-400`}>Delete</button>
          )}
        </div>
      </div>
      {!canLaunch && <p role="note" className="text-sm text-ink-soft">Read-only: as a {role} you see every design, table and chart and download them; launching is for owners and modelers.</p>}
      {actionError && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{actionError}</p>}
      {c.status === "failed" && c.error && <p role="alert" data-testid="comparison-error" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">This comparison failed: {c.error}</p>}

      <DesignProgress labId={labId} c={c} />

      {c.results && current && (
        <>
          <Caution />
          <Highlights c={c} species={current} />
          <div className="flex flex-wrap items-center gap-2 text-sm" role="group" aria-label="Species shown">
            <span className="font-medium">Species</span>
            {species.map((sp) => (
              <button key={sp} type="button" aria-pressed={sp === current} onClick={() => setChosen(sp)}
                className={`rounded-full border px-3 py-0.5 ${sp === current ? "border-ochre bg-ochre-light font-medium" : "border-ink/20 bg-white hover:border-ochre"}`}>
                {sp}
              </button>
            ))}
          </div>
          <WarningList warnings={designWarnings(c)} title="Warnings on these results" testId="comparison-warnings" />
          <NoiseTable c={c} species={current} />
          <ComparisonCharts c={c} species={current} />
          <DifferenceTest c={c} species={current} />
        </>
      )}
    </div>
  );
}

/** The first species that oscillates in every design (the period is the question then), else null. */
function pickSpecies(c: ComparisonJson): string | null {
  const r = c.results;
  if (!r) return null;
  return resultSpecies(r).find((sp) => r.designs.every((d) => d.species.find((s) => s.species === sp)?.oscillating)) ?? null;
}

function DesignProgress({ labId, c }: { labId: string; c: ComparisonJson }) {
  return (
    <section aria-labelledby="progress-h" className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-3">
        <h2 id="progress-h" className="text-lg font-semibold">Designs</h2>
        {c.status !== "draft" && <RunProgressBar value={c.progress} label="Progress across all designs" className="max-w-xs" />}
        {c.status !== "draft" && <span className="text-sm tabular-nums text-ink-soft">{Math.round(c.progress * 100)}%</span>}
        {c.finishing && <span className="text-sm text-ink-soft" role="status">Every design has run; computing the noise table…</span>}
      </div>
      <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
        <table className="w-full min-w-[40rem] text-sm" aria-label="Designs and their runs">
          <TableHead columns={["Design", "Circuit", "Parameters", "Run", { label: "Progress", className: "w-40" }]} />
          <tbody>
            {c.designs.map((d) => {
              const params = { ...d.overrides, ...(d.values ?? {}) };
              const p = d.run ? (d.run.status === "succeeded" ? 1 : d.run.chunks_done / d.run.chunks_total) : 0;
              return (
                <tr key={d.id} className="border-t border-ink/10" data-testid="design-progress">
                  <th scope="row" className="px-3 py-2 text-left font-medium">{d.label}</th>
                  <td className="px-3 py-2"><Link href={`/labs/${labId}/circuits/${d.circuit_id}`}>{d.circuit_name}</Link> <span className="text-ink-soft">v{d.version_number}</span></td>
                  <td className="px-3 py-2 text-ink-soft">{Object.keys(params).length ? Object.entries(params).map(([k, v]) => `${k} = ${formatNumber(v)}`).join(", ") : "as saved"}</td>
                  <td className="px-3 py-2">{d.run ? <><Link href={`/labs/${labId}/runs/${d.run.id}`}>#{d.run.id}</Link> <span className="text-ink-soft">{d.run.status}, seed {d.run.seed}</span></> : <span className="text-ink-soft">not launched</span>}</td>
                  <td className="px-3 py-2">{d.run ? <RunProgressBar value={p} label={`Progress of ${d.label}`} /> : "—"}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </section>
  );
}

/** One sentence per measure: which design is lowest, and whether its interval clears every other design's. */
function Highlights({ c, species }: { c: ComparisonJson; species: string }) {
  const r = c.results!;
  const line = (key: "period_cv" | "cv", what: string) => {
    const rows = r.designs.map((d) => ({ d, iv: d.species.find((s) => s.species === species)?.[key] ?? null }))
      .filter((x): x is { d: typeof x.d; iv: NonNullable<typeof x.iv> } => x.iv != null && x.iv.value != null);
    if (rows.length < 2) return null;
    rows.sort((a, b) => (a.iv.value as number) - (b.iv.value as number));
    const best = rows[0]!;
    const clear = rows.slice(1).every((x) => (best.iv.hi ?? Infinity) < (x.iv.lo ?? -Infinity));
    return (
      <li>
        <strong className="text-ink">{what}</strong> of {species}: <strong className="text-ink" data-testid={`best-${key}`}>{best.d.label}</strong>,{" "}
        {formatNumber(best.iv.value)} ({Math.round(r.level * 100)}% interval {formatNumber(best.iv.lo)}–{formatNumber(best.iv.hi)});{" "}
        {clear ? "its interval lies below every other design's." : <>its interval overlaps the next design&apos;s ({rows[1]!.d.label}); the test below says how sure that difference is.</>}
      </li>
    );
  };
  const items = [line("period_cv", "Most precise period"), line("cv", "Lowest CV")].filter(Boolean);
  if (!items.length) return null;
  return <ul className="flex list-disc flex-col gap-1 pl-5 text-sm text-ink-soft" aria-label="Highlights">{items}</ul>;
}
