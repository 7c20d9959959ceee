"use client";

import { useEffect, useRef, useState } from "react";
import useSWRInfinite from "swr/infinite";

import { AUDIT_ACTION_NAMES, AUDIT_ACTIONS, AUDIT_SUBJECTS, describeAuditEvent, type AuditEventJson } from "@/lib/view/audit";

interface Page { events: AuditEventJson[]; total: number }
const PAGE = 50;

async function fetchPage(url: string): Promise<Page> {
  const res = await fetch(url);
  const data = (await res.json().catch(() => null)) as (Page & { error?: string }) | null;
  if (!res.ok || !data) throw new Error(data?.error ?? `request failed (${res.status})`);
  return data;
}

/**
 * The lab's audit trail with filters by action, actor and dates (owners). `revision` is the
 * newest event's id as the server saw it: when an action on the page refreshes the server
 * render, the trail fetches again.
 */
export function AuditTrail({ labId, actors, revision }: { labId: string; actors: string[]; revision: string }) {
  const [filters, setFilters] = useState({ action: "", actor: "", from: "", to: "" });
  const query = new URLSearchParams(Object.entries(filters).filter(([, v]) => v));
  const { data, error, size, setSize, isLoading, mutate } = useSWRInfinite<Page>(
    (i) => `/api/labs/${labId}/audit?${query.toString()}${query.size ? "&" : ""}limit=${PAGE}&offset=${i * PAGE}`, fetchPage,
  );
  const seen = useRef(revision);
  useEffect(() => {
    if (seen.current === revision) return;
    seen.current = revision;
    void mutate();
  }, [revision, mutate]);
  const events = data?.flatMap((p) => p.events) ?? [];
  const total = data?.[0]?.total ?? 0;
  const set = (k: keyof typeof filters) => (e: React.ChangeEvent<HTMLInputElement | HTMLSelectElement>) => setFilters({ ...filters, [k]: e.target.value });
  const control = "rounded-md border border-ink/25 bg-white px-2 py-1";
  return (
    <div className="flex flex-col gap-3">
      <form aria-label="Filter the audit trail" className="flex flex-wrap items-end gap-3 text-sm" onSubmit={(e) => e.preventDefault()}>
        <label className="flex flex-col gap-1">Action
          <select value={filters.action} onChange={set("action")} className={control}>
            <option value="">all</option>
            {AUDIT_SUBJECTS.map((s) => (
              <optgroup key={s} label={s}>
                <option value={s}>every {s} action</option>
                {AUDIT_ACTION_NAMES.filter((a) => a.startsWith(`${s}.`)).map((a) => <option key={a} value={a}>{a}</option>)}
              </optgroup>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">Who
          <select value={filters.actor} onChange={set("actor")} className={control}>
            <option value="">anyone</option>
            {actors.map((a) => <option key={a} value={a}>{a === "worker" ? "the worker" : a}</option>)}
          </select>
        </label>
        <label className="flex flex-col gap-1">From
          <input type="date" value={filters.from} onChange={set("from")} className={control} />
        </label>
        <label className="flex flex-col gap-1">To
          <input type="date" value={filters.to} onChange={set("to")} className={control} />
        </label>
        {Object.values(filters).some(Boolean) && (
          <button type="button" className="pb-1 text-ink-soft underline" onClick={() => setFilters({ action: "", actor: "", from: "", to: "" })}>Clear filters</button>
        )}
      </form>
      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{(error as Error).message}</p>}
      <table className="w-full overflow-hidden rounded-lg border border-ink/10 bg-white text-sm">
        <caption className="sr-only">Audit trail</caption>
        <thead className="bg-paper text-left text-ink-soft">
          <tr><th className="px-3 py-2">When (UTC)</th><th className="px-3 py-2">Action</th><th className="px-3 py-2">What happened</th></tr>
        </thead>
        <tbody>
          {events.map((e) => (
            <tr key={e.id} className="border-t border-ink/10" data-action={e.action}>
              <td className="whitespace-nowrap px-3 py-2 tabular-nums text-ink-soft">{e.created_at.slice(0, 19).replace("T", " ")}</td>
              <td className="px-3 py-2"><code title={AUDIT_ACTIONS[e.action]}>{e.action}</code></td>
              <td className="px-3 py-2">{describeAuditEvent(e)}</td>
            </tr>
          ))}
          {!isLoading && events.length === 0 && <tr><td colSpan={3} className="px-3 py-4 text-center text-ink-soft">Nothing recorded{query.size ? " that matches these filters" : " yet"}.</td></tr>}
        </tbody>
      </table>
      <div className="flex items-center gap-3 text-sm text-ink-soft">
        <span>{events.length} of {total} event{total === 1 ? "" : "s"}</span>
        {events.length < total && <button type="button" className="underline" onClick={() => void setSize(size + 1)}>Show {Math.min(PAGE, total - events.length)} more</button>}
      </div>
    </div>
  );
}
