"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";
import useSWR from "swr";

import { jsonFetcher } from "@/app/_components/run-api";

interface CircuitsList { circuits: { id: string; name: string; versions: number; latest_version_id: string }[] }
interface CircuitDetail { id: string; name: string; versions: { id: string; number: number; message: string | null; created_at: string; created_by: string | null }[] }

/** Circuit, then version; continues to the launcher with `?version=`. */
export function VersionPicker({ labId }: { labId: string }) {
  const router = useRouter();
  const { data: list, error, isLoading } = useSWR<CircuitsList>(`/api/circuits?lab_id=${labId}&limit=200`, jsonFetcher);
  const [circuitId, setCircuitId] = useState("");
  const [versionId, setVersionId] = useState("");
  const { data: detail } = useSWR<CircuitDetail>(circuitId ? `/api/circuits/${circuitId}` : null, jsonFetcher);
  const chosenVersion = versionId || detail?.versions[0]?.id || "";

  if (error) return <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">The circuits could not be loaded: {error.message}</p>;
  if (isLoading || !list) return <div aria-busy="true" aria-label="Loading circuits" className="h-24 animate-pulse rounded-lg bg-ink/5" />;
  if (list.circuits.length === 0) {
    return (
      <p className="rounded-lg border border-dashed border-ink/20 bg-white px-4 py-6 text-sm text-ink-soft">
        This lab has no circuits yet. Write one under <a href={`/labs/${labId}/circuits`}>Circuits</a> first; runs start from a saved version of a circuit.
      </p>
    );
  }
  return (
    <form
      className="flex max-w-xl flex-col gap-4 rounded-lg border border-ink/10 bg-white p-4"
      onSubmit={(e) => { e.preventDefault(); if (chosenVersion) router.push(`/labs/${labId}/runs/new?version=${chosenVersion}`); }}
    >
      <div className="flex flex-col gap-1 text-sm">
        <label htmlFor="pick-circuit" className="font-medium">Circuit</label>
        <select id="pick-circuit" value={circuitId} onChange={(e) => { setCircuitId(e.target.value); setVersionId(""); }} className="rounded-md border border-ink/25 bg-white px-2 py-2">
          <option value="">Choose a circuit…</option>
          {list.circuits.map((c) => <option key={c.id} value={c.id}>{c.name} ({c.versions} version{c.versions === 1 ? "" : "s"})</option>)}
        </select>
      </div>
      <div className="flex flex-col gap-1 text-sm">
        <label htmlFor="pick-version" className="font-medium">Version</label>
        <select id="pick-version" value={chosenVersion} onChange={(e) => setVersionId(e.target.value)} disabled={!detail} className="rounded-md border border-ink/25 bg-white px-2 py-2 disabled:bg-paper">
          {!detail && <option value="">{circuitId ? "Loading versions…" : "Choose a circuit first"}</option>}
          {detail?.versions.map((v, k) => (
            <option key={v.id} value={v.id}>
              v{v.number}{k === 0 ? " (latest)" : ""}{v.message ? ` — ${v.message}` : ""}{v.created_by ? ` · ${v.created_by}` : ""}
            </option>
          ))}
        </select>
      </div>
      <div>
        <button type="submit" disabled={!chosenVersion} className="rounded-md bg-ochre px-4 py-2 text-sm font-medium text-white hover:bg-ochre-dark disabled:opacity-50">
          Continue to settings
        </button>
      </div>
    </form>
  );
}
