"use client";

import Link from "next/link";
import { useRouter } from "next/navigation";
import { useEffect, useState } from "react";
import useSWR from "swr";

import { fetchJson, jsonFetcher } from "@/app/_components/run-api";
import { RunProgressBar, RunStatusBadge, When, runKindLabel } from "@/app/_components/run-status";
import { WarningList } from "@/app/_components/warning-list";
import { amountUnitOf, burnInOf, etaSeconds, formatCount, formatDuration, formatNumber, isActive, METHOD_LABEL, type RunJson } from "@/lib/view/run-view";
import { launchBodyOf } from "@/lib/schemas/run-options";
import { RUN_LIMITS } from "@/lib/schemas/runs";

import { RunResults } from "./run-results";

export interface RunViewProps {
  labId: string;
  initialRun: RunJson;
  contentHash: string | null;
  canLaunch: boolean;
  canCancel: boolean;
  role: string;
  /** The circuit's time and amount units (CONTRACT.md §1 `units`). */
  timeUnit: string;
  modelAmountUnit: string;
}

/** A run: live progress while it runs, then its results; provenance beside. Polls the run while it is active. */
export function RunView({ labId, initialRun, contentHash, canLaunch, canCancel, role, timeUnit, modelAmountUnit }: RunViewProps) {
  // The server's copy renders first; while the run is active, poll it every second (the cache is
  // empty until the first fetch, so an empty cache counts as the server's copy).
  const { data, mutate } = useSWR<RunJson>(`/api/runs/${initialRun.id}`, jsonFetcher, {
    fallbackData: initialRun,
    revalidateOnMount: true,
    refreshInterval: (d) => (isActive((d ?? initialRun).status) ? 1000 : 0),
  });
  const run = data ?? initialRun;
  return (
    <div className="flex flex-col gap-6">
      <div>
        <p className="text-sm"><Link href={`/labs/${labId}/runs`}>← Runs</Link></p>
        <div className="mt-1 flex flex-wrap items-center gap-3">
          <h1 className="text-2xl font-semibold">Run #{run.id}</h1>
          <RunStatusBadge status={run.status} />
        </div>
        <p className="mt-1 text-ink-soft">
          {run.circuit_name} · version {run.version_number} · {runKindLabel(run)}
          {run.kind === "ensemble" && <> · {formatCount(run.settings.runs)} cell{run.settings.runs === 1 ? "" : "s"}</>}
        </p>
      </div>
      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_20rem]">
        <div className="flex min-w-0 flex-col gap-6">
          {isActive(run.status) && <RunProgress run={run} canCancel={canCancel} onChange={() => void mutate()} />}
          {run.status === "failed" && (
            <section role="alert" aria-labelledby="failed-h" className="rounded-lg border border-red-300 bg-red-50 p-4 text-sm text-red-900">
              <h2 id="failed-h" className="font-semibold">This run failed</h2>
              <p data-testid="run-error" className="mt-1 whitespace-pre-wrap">{run.error ?? "No reason was recorded."}</p>
              <p className="mt-2 text-red-800">Nothing of it is kept but this record. Check the settings and the circuit, then launch again.</p>
            </section>
          )}
          {run.status === "cancelled" && (
            <section role="note" aria-labelledby="cancelled-h" className="rounded-lg border border-ink/15 bg-white p-4 text-sm">
              <h2 id="cancelled-h" className="font-semibold">This run was cancelled</h2>
              <p className="mt-1 text-ink-soft">
                Cancelled <When iso={run.finished_at} /> after {run.chunks_done} of {run.chunks_total} chunk{run.chunks_total === 1 ? "" : "s"}.
                A cancelled run keeps no results; launch it again to get them.
              </p>
            </section>
          )}
          {run.status === "succeeded" && <WarningList warnings={run.warnings} title="Warnings on these results" testId="run-warnings" />}
          {run.status === "succeeded" && <RunResults run={run} timeUnit={timeUnit} modelAmountUnit={modelAmountUnit} />}
        </div>
        <RunProvenance labId={labId} run={run} contentHash={contentHash} canLaunch={canLaunch} role={role} timeUnit={timeUnit} modelAmountUnit={modelAmountUnit} />
      </div>
    </div>
  );
}

/** Progress bar, cells done, elapsed time, ETA and the cancel button of a queued or running run. */
function RunProgress({ run, canCancel, onChange }: { run: RunJson; canCancel: boolean; onChange: () => void }) {
  const [now, setNow] = useState(() => Date.now());
  const [confirming, setConfirming] = useState(false);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    const h = setInterval(() => setNow(Date.now()), 1000);
    return () => clearInterval(h);
  }, []);
  const eta = etaSeconds(run, now);
  const cellsDone = run.kind === "trace" ? 0 : Math.min(run.settings.runs, run.chunks_done * RUN_LIMITS.chunkCells);
  const elapsed = run.started_at ? (now - Date.parse(run.started_at)) / 1000 : null;
  const cancel = async () => {
    setBusy(true);
    setError(null);
    try {
      await fetchJson(`/api/runs/${run.id}/cancel`, { method: "POST" });
      onChange();
    } catch (e) {
      setError(e instanceof Error ? e.message : String(e));
    } finally {
      setBusy(false);
      setConfirming(false);
    }
  };
  return (
    <section aria-labelledby="progress-h" className="rounded-lg border border-ink/10 bg-white p-4">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h2 id="progress-h" className="font-semibold">{run.status === "queued" ? "Queued" : "Running"}</h2>
        <span className="text-sm tabular-nums text-ink-soft" data-testid="run-progress-text">{Math.round(run.progress * 100)}%</span>
      </div>
      <RunProgressBar value={run.progress} label="Run progress" className="mt-2 h-3" />
      <p className="mt-2 text-sm text-ink-soft">
        {run.status === "queued"
          ? "Waiting for a worker to pick it up."
          : run.kind === "trace"
            ? "Solving the mean-field ODE."
            : <>{formatCount(cellsDone)} of {formatCount(run.settings.runs)} cells ({run.chunks_done} of {run.chunks_total} chunks of {RUN_LIMITS.chunkCells})</>}
        {elapsed !== null && <> · running for {formatDuration(elapsed)}</>}
        {run.status === "running" && <> · {eta === null ? "time left: estimating after the first chunk" : <>about {formatDuration(eta)} left</>}</>}
      </p>
      {canCancel && (
        <div className="mt-3 flex flex-wrap items-center gap-2 text-sm">
          {confirming ? (
            <>
              <span>Stop this run? Finished chunks are discarded.</span>
              <button type="button" onClick={cancel} disabled={busy} className="rounded-md bg-red-700 px-3 py-1.5 font-medium text-white disabled:opacity-60">Yes, cancel the run</button>
              <button type="button" onClick={() => setConfirming(false)} className="rounded-md border border-ink/20 px-3 py-1.5">Keep running</button>
            </>
          ) : (
            <button type="button" onClick={() => setConfirming(true)} className="rounded-md border border-red-300 bg-white px-3 py-1.5 text-red-800 hover:bg-red-50">Cancel run</button>
          )}
        </div>
      )}
      {error && <p role="alert" className="mt-2 text-sm text-red-700">{error}</p>}
    </section>
  );
}

/** Everything needed to reproduce the run, and "run again exactly" for those who may launch. */
function RunProvenance({ labId, run, contentHash, canLaunch, role, timeUnit, modelAmountUnit }: {
  labId: string; run: RunJson; contentHash: string | null; canLaunch: boolean; role: string; timeUnit: string; modelAmountUnit: string;
}) {
  const router = useRouter();
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const s = run.settings;
  const again = async () => {
    setBusy(true);
    setError(null);
    try {
      const r = await fetchJson<{ id: string }>("/api/runs", {
        method: "POST",
        body: launchBodyOf(run),
      });
      router.push(`/labs/${labId}/runs/${r.id}`);
    } catch (e) {
      setBusy(false);
      setError(e instanceof Error ? e.message : String(e));
    }
  };
  const overrides = Object.entries(s.overrides ?? {});
  const rows: [string, React.ReactNode][] = [
    ["Circuit", <Link key="c" href={`/labs/${labId}/circuits/${run.circuit_id}`}>{run.circuit_name}</Link>],
    ["Version", `${run.version_number}`],
    ["Content hash", <code key="h" title={contentHash ?? undefined} className="break-all text-xs">{contentHash ? contentHash.slice(0, 16) + "…" : "—"}</code>],
    ["Method", `${METHOD_LABEL[run.method]} (${run.method})`],
    ...(s.tau_epsilon !== undefined ? ([["Leap tolerance ε", formatNumber(s.tau_epsilon)]] as [string, React.ReactNode][]) : []),
    ...(run.kind === "ensemble" ? ([["Seed", <span key="s" data-testid="run-seed">{run.seed}</span>], ["Cells", formatCount(s.runs)]] as [string, React.ReactNode][]) : []),
    ["End time", `${s.t_end} ${timeUnit}`],
    ["Sampling step", `${s.dt} ${timeUnit}`],
    ["Burn-in", s.burn_in !== undefined ? `${s.burn_in} ${timeUnit}` : `automatic: 5 relaxation times of the circuit, at least t_end / 5 (${formatNumber(burnInOf(s))} ${timeUnit}), at most t_end / 2; the value used is given with the noise table`],
    ["Overrides", overrides.length ? overrides.map(([k, v]) => `${k} = ${v}`).join(", ") : "none (saved parameters)"],
    ["Output units", amountUnitOf(s.units, modelAmountUnit)],
    ["Engine", run.engine_version],
    ["Launched by", run.created_by ?? "—"],
    ["Launched", <When key="w" iso={run.created_at} />],
    ["Started", <When key="st" iso={run.started_at} />],
    ["Finished", <When key="f" iso={run.finished_at} />],
    ["Wall time", formatDuration(run.wall_s)],
    ...(run.kind === "ensemble" ? ([["Events", formatCount(run.events)]] as [string, React.ReactNode][]) : []),
  ];
  return (
    <aside aria-labelledby="prov-h" className="flex flex-col gap-3 self-start rounded-lg border border-ink/10 bg-white p-4 text-sm">
      <h2 id="prov-h" className="font-semibold">Provenance</h2>
      <p className="text-xs text-ink-soft">The same version, settings and seed give the same statistics, whatever the number of threads.</p>
      <dl className="grid grid-cols-[auto_minmax(0,1fr)] gap-x-3 gap-y-1.5">
        {rows.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="text-ink-soft">{k}</dt>
            <dd className="min-w-0 break-words tabular-nums">{v}</dd>
          </div>
        ))}
      </dl>
      {canLaunch ? (
        <>
          <button type="button" onClick={again} disabled={busy} className="mt-1 rounded-md border border-ochre bg-white px-3 py-2 font-medium text-ochre-dark hover:bg-ochre-light disabled:opacity-60">
            {busy ? "Launching…" : "Run again exactly"}
          </button>
          <p className="text-xs text-ink-soft">Launches a new run with this version, method, settings{run.kind === "ensemble" ? " and seed" : ""}.</p>
          {error && <p role="alert" className="text-sm text-red-700">{error}</p>}
        </>
      ) : (
        <p className="text-xs text-ink-soft">Read-only: as a {role} you can download everything here, and launch or cancel nothing.</p>
      )}
    </aside>
  );
}
