"use client";

import Link from "next/link";
import { useMemo, useState } from "react";

import { formatWhen } from "./format";

export interface CircuitRow {
  id: string;
  name: string;
  versions: number;
  updatedAt: string;
  changedBy: string | null;
  lastRunAt: string | null;
}

type SortKey = "name" | "updated" | "versions";

const COMPARE: Record<SortKey, (a: CircuitRow, b: CircuitRow) => number> = {
  name: (a, b) => a.name.localeCompare(b.name, "en", { sensitivity: "base", numeric: true }),
  updated: (a, b) => a.updatedAt.localeCompare(b.updatedAt),
  versions: (a, b) => a.versions - b.versions,
};

/** The lab's circuits with a name search and sortable columns (name, versions, last change). */
export function CircuitTable({ labId, rows }: { labId: string; rows: CircuitRow[] }) {
  const [query, setQuery] = useState("");
  const [sort, setSort] = useState<{ key: SortKey; desc: boolean }>({ key: "updated", desc: true });
  const shown = useMemo(() => {
    const q = query.trim().toLowerCase();
    const list = rows.filter((r) => r.name.toLowerCase().includes(q));
    list.sort((a, b) => (sort.desc ? -1 : 1) * COMPARE[sort.key](a, b) || a.name.localeCompare(b.name));
    return list;
  }, [rows, query, sort]);

  const header = (key: SortKey, label: string, className = "") => {
    const active = sort.key === key;
    return (
      <th scope="col" className={`px-3 py-2 font-medium ${className}`} aria-sort={active ? (sort.desc ? "descending" : "ascending") : "none"}>
        <button
          type="button" className="inline-flex items-center gap-1 hover:text-ink"
          onClick={() => setSort((s) => ({ key, desc: s.key === key ? !s.desc : key !== "name" }))}
        >
          {label}
          <span aria-hidden className={active ? "text-ochre-dark" : "text-ink/30"}>{active ? (sort.desc ? "▼" : "▲") : "↕"}</span>
          <span className="sr-only">{active ? `, sorted ${sort.desc ? "descending" : "ascending"}` : ", sort"}</span>
        </button>
      </th>
    );
  };

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3">
        <label className="flex flex-col gap-1 text-sm">
          <span className="font-medium">Search by name</span>
          <input
            type="search" value={query} onChange={(e) => setQuery(e.target.value)} placeholder="e.g. timer"
            className="w-64 max-w-full rounded-md border border-ink/25 bg-white px-3 py-1.5"
          />
        </label>
        <p className="pb-1.5 text-sm text-ink-soft" aria-live="polite">
          {shown.length === rows.length ? `${rows.length} circuit${rows.length === 1 ? "" : "s"}` : `${shown.length} of ${rows.length} circuits`}
        </p>
      </div>
      <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
        <table className="w-full min-w-[640px] text-sm">
          <caption className="sr-only">Circuits of this lab</caption>
          <thead className="bg-paper text-left text-ink-soft">
            <tr>
              {header("name", "Name")}
              {header("versions", "Versions", "text-right")}
              <th scope="col" className="px-3 py-2 font-medium">Last run</th>
              <th scope="col" className="px-3 py-2 font-medium">Changed by</th>
              {header("updated", "Updated")}
            </tr>
          </thead>
          <tbody>
            {shown.map((r) => (
              <tr key={r.id} className="border-t border-ink/10 hover:bg-paper/60">
                <td className="px-3 py-2 font-medium"><Link href={`/labs/${labId}/circuits/${r.id}`}>{r.name}</Link></td>
                <td className="px-3 py-2 text-right tabular-nums">{r.versions}</td>
                <td className="px-3 py-2 text-ink-soft">{r.lastRunAt ? formatWhen(r.lastRunAt) : "never"}</td>
                <td className="px-3 py-2 text-ink-soft">{r.changedBy ?? "—"}</td>
                <td className="px-3 py-2 whitespace-nowrap text-ink-soft">{formatWhen(r.updatedAt)}</td>
              </tr>
            ))}
            {shown.length === 0 && (
              <tr><td colSpan={5} className="px-3 py-6 text-center text-ink-soft">No circuit name contains &ldquo;{query}&rdquo;.</td></tr>
            )}
          </tbody>
        </table>
      </div>
    </div>
  );
}
