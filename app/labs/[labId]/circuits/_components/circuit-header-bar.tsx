"use client";

import Link from "next/link";
import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useId } from "react";

import { fileSlug, formatWhen } from "./format";

export interface VersionOption {
  id: string;
  number: number;
  message: string | null;
  createdAt: string;
  createdBy: string | null;
}

export interface CircuitHeaderBarProps {
  labId: string;
  circuitName: string;
  base: string;
  versions: VersionOption[];
  canLaunch: boolean;
}

const TABS = [
  { slug: "", label: "Circuit" },
  { slug: "counts", label: "Counts view" },
  { slug: "stability", label: "Stability" },
  { slug: "versions", label: "Versions" },
];

/** The version picker, the run link and the tabs of one circuit; the chosen version travels in `?version=`. */
export function CircuitHeaderBar({ labId, circuitName, base, versions, canLaunch }: CircuitHeaderBarProps) {
  const router = useRouter();
  const selectId = useId();
  const pathname = usePathname();
  const search = useSearchParams();
  const requested = search.get("version");
  const selected = versions.find((v) => v.id === requested) ?? versions[0];
  const isLatest = selected.id === versions[0].id;
  const query = requested && !isLatest ? `?version=${selected.id}` : "";
  const active = pathname.slice(base.length).split("/")[1] ?? "";
  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2 text-sm">
        <span className="flex items-center gap-2">
          <label htmlFor={selectId} className="font-medium">Version</label>
          <select
            id={selectId} value={selected.id}
            onChange={(e) => {
              const v = e.target.value;
              router.push(`${pathname}${v === versions[0].id ? "" : `?version=${v}`}`);
            }}
            className="max-w-[22rem] rounded-md border border-ink/25 bg-white px-2 py-1"
          >
            {versions.map((v) => (
              <option key={v.id} value={v.id}>
                {`v${v.number}${v.id === versions[0].id ? " (latest)" : ""} · ${formatWhen(v.createdAt)}${v.message ? ` · ${v.message}` : ""}`}
              </option>
            ))}
          </select>
        </span>
        <span className="text-ink-soft" data-testid="version-provenance">
          saved by {selected.createdBy ?? "a removed user"}, {formatWhen(selected.createdAt)}
        </span>
        {!isLatest && (
          <span className="rounded-full bg-ochre-light px-2 py-0.5 text-xs font-medium text-ochre-dark">
            older version: v{versions[0].number} is the latest
          </span>
        )}
        <span className="flex items-center gap-2 text-ink-soft">
          Download v{selected.number}:
          <a href={`/api/versions/${selected.id}`} download={`${fileSlug(circuitName)}-v${selected.number}.circuit.json`}>circuit file</a>
          <a href={`/api/versions/${selected.id}/sbml`} download={`${fileSlug(circuitName)}-v${selected.number}.sbml.xml`}>SBML</a>
        </span>
        {canLaunch && (
          <Link
            href={`/labs/${labId}/runs/new?version=${selected.id}`}
            className="ml-auto rounded-md bg-ochre px-3 py-1.5 font-medium text-white no-underline hover:bg-ochre-dark hover:no-underline"
          >
            Launch run of v{selected.number}
          </Link>
        )}
      </div>
      <nav aria-label="Circuit views" className="flex gap-1 overflow-x-auto border-b border-ink/10">
        {TABS.map((t) => {
          const isActive = t.slug === active;
          return (
            <Link
              key={t.slug}
              href={`${base}${t.slug ? `/${t.slug}` : ""}${query}`}
              aria-current={isActive ? "page" : undefined}
              className={`-mb-px whitespace-nowrap border-b-2 px-3 py-2 text-sm no-underline ${isActive ? "border-ochre font-semibold text-ink" : "border-transparent text-ink-soft hover:text-ink"}`}
            >
              {t.label}
            </Link>
          );
        })}
      </nav>
    </div>
  );
}
