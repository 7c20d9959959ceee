"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";

import { DatasetFileError, decodeTextFile, formatBytes, parseDatasetCsv } from "@/lib/view/datasets";
import { DATASET_LIMITS, type DatasetKind } from "@/lib/schemas/datasets";

const input = "rounded-md border border-ink/25 bg-white px-3 py-1.5";

async function postForm(url: string, form: FormData): Promise<{ ok: true; json: Record<string, unknown> } | { ok: false; error: string }> {
  const res = await fetch(url, { method: "POST", body: form });
  const json = (await res.json().catch(() => null)) as Record<string, unknown> | null;
  if (res.ok && json) return { ok: true, json };
  return { ok: false, error: typeof json?.error === "string" ? json.error : `upload failed (${res.status})` };
}

/**
 * The dataset upload form. The chosen file is checked in the browser with the same parser the
 * server uses, so a bad row shows before anything is sent; the server checks again.
 */
export function DatasetUploadForm({ labId }: { labId: string }) {
  const router = useRouter();
  const [kind, setKind] = useState<DatasetKind>("series");
  const [unit, setUnit] = useState("a.u.");
  const [preview, setPreview] = useState<{ ok: boolean; text: string } | null>(null);
  const [file, setFile] = useState<File | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  async function check(f: File | null, k: DatasetKind) {
    setFile(f);
    setPreview(null);
    if (!f) return;
    if (f.size > DATASET_LIMITS.maxFileBytes) return setPreview({ ok: false, text: `file: larger than ${formatBytes(DATASET_LIMITS.maxFileBytes)} (this one is ${formatBytes(f.size)})` });
    try {
      const { parsed, warnings } = parseDatasetCsv(decodeTextFile(new Uint8Array(await f.arrayBuffer())), k);
      const rows = parsed.kind === "series" ? parsed.time.length : parsed.values[0]!.length;
      const what = parsed.kind === "series" ? `${rows} time points of ${parsed.columns.join(", ")}` : `${rows} cells, ${parsed.columns.join(", ")}`;
      setPreview({ ok: true, text: `Reads as ${what}.${warnings.length ? ` ${warnings.join("; ")}.` : ""}` });
    } catch (e) {
      setPreview({ ok: false, text: e instanceof DatasetFileError ? e.message : "file: could not be read" });
    }
  }

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    const form = new FormData(e.currentTarget);
    form.set("lab_id", labId);
    const r = await postForm("/api/datasets", form);
    setBusy(false);
    if (!r.ok) return setError(r.error);
    router.push(`/labs/${labId}/data/${String(r.json.id)}`);
    router.refresh();
  }

  return (
    <form onSubmit={onSubmit} aria-label="Upload a dataset" className="flex flex-col gap-3 rounded-lg border border-ink/10 bg-white p-4">
      <h2 className="text-lg font-semibold">Upload a dataset</h2>
      <fieldset className="flex flex-wrap gap-4 text-sm">
        <legend className="sr-only">Kind</legend>
        {([["series", "Time series (time column, one column per reporter)"], ["snapshot", "Single-cell snapshot (one row per cell)"]] as const).map(([k, label]) => (
          <label key={k} className="flex items-center gap-2">
            <input type="radio" name="kind" value={k} checked={kind === k} onChange={() => { setKind(k); void check(file, k); }} /> {label}
          </label>
        ))}
      </fieldset>
      <div className="grid gap-3 sm:grid-cols-2">
        <label className="flex flex-col gap-1 text-sm">Name
          <input name="name" required maxLength={200} className={input} />
        </label>
        <label className="flex flex-col gap-1 text-sm">File (CSV, at most {formatBytes(DATASET_LIMITS.maxFileBytes)})
          <input name="file" type="file" required accept=".csv,.tsv,.txt,text/csv,text/plain" className="text-sm"
            onChange={(e) => void check(e.currentTarget.files?.[0] ?? null, kind)} />
        </label>
        {kind === "series" && (
          <label className="flex flex-col gap-1 text-sm">Time unit
            <select name="time_unit" defaultValue="min" className={input}>
              <option value="s">seconds (s)</option><option value="min">minutes (min)</option><option value="h">hours (h)</option>
            </select>
          </label>
        )}
        <label className="flex flex-col gap-1 text-sm">Amount unit
          <input name="amount_unit" value={unit} onChange={(e) => setUnit(e.target.value)} list="amount-units" required maxLength={40} className={input} />
          <datalist id="amount-units"><option value="a.u." /><option value="molecules" /><option value="nM" /></datalist>
        </label>
        {!/^molecules?$/i.test(unit.trim()) && (
          <label className="flex flex-col gap-1 text-sm">Molecules per {unit || "unit"}
            <input name="molecules_per_unit" type="number" step="any" min="0" required className={input} placeholder="e.g. 0.5" />
            <span className="text-xs text-ink-soft">Your calibration: how many molecules one {unit || "unit"} is. Statistics are shown in molecules.</span>
          </label>
        )}
        <label className="flex flex-col gap-1 text-sm sm:col-span-2">Description (optional)
          <input name="description" maxLength={2000} className={input} placeholder="strain, medium, instrument, gating…" />
        </label>
      </div>
      {preview && <p className={`text-sm ${preview.ok ? "text-moss" : "text-red-700"}`} data-testid="file-check">{preview.text}</p>}
      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{error}</p>}
      <div>
        <button type="submit" disabled={busy} className="rounded-md bg-ochre px-3 py-1.5 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
          {busy ? "Uploading…" : "Upload dataset"}
        </button>
      </div>
    </form>
  );
}

/** Imports a circuit from an SBML or circuit JSON file. */
export function CircuitUploadForm({ labId }: { labId: string }) {
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<{ id: string; name: string; warnings: string[] } | null>(null);
  const [busy, setBusy] = useState(false);
  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    setDone(null);
    const el = e.currentTarget;
    const form = new FormData(el);
    form.set("lab_id", labId);
    const r = await postForm("/api/circuits/upload", form);
    setBusy(false);
    if (!r.ok) return setError(r.error);
    setDone({ id: String(r.json.id), name: String(r.json.name), warnings: Array.isArray(r.json.warnings) ? r.json.warnings.map((w: unknown) => String((w as { message?: unknown })?.message ?? w)) : [] });
    el.reset();
  }
  return (
    <form onSubmit={onSubmit} aria-label="Import a circuit file" className="flex flex-col gap-3 rounded-lg border border-ink/10 bg-white p-4">
      <h2 className="text-lg font-semibold">Import a circuit file</h2>
      <p className="text-sm text-ink-soft">SBML (Level 2 or 3, .xml or .sbml) or a Burstwise circuit JSON file, at most {formatBytes(DATASET_LIMITS.maxCircuitFileBytes)}. It becomes a new circuit with version 1.</p>
      <label className="flex flex-col gap-1 text-sm">Circuit file
        <input name="file" type="file" required accept=".xml,.sbml,.json,application/xml,application/json" className="text-sm" />
      </label>
      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{error}</p>}
      {done && (
        <p className="text-sm text-moss">
          Imported <a href={`/labs/${labId}/circuits/${done.id}`}>{done.name}</a>.{done.warnings.length ? ` Notes: ${done.warnings.join("; ")}` : ""}
        </p>
      )}
      <div>
        <button type="submit" disabled={busy} className="rounded-md bg-ochre px-3 py-1.5 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
          {busy ? "Importing…" : "Import circuit"}
        </button>
      </div>
    </form>
  );
}

/** The owner's delete button for a dataset. */
export function DeleteDatasetButton({ labId, datasetId, name }: { labId: string; datasetId: string; name: string }) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  return (
    <span className="inline-flex flex-col">
      <button type="button" className="text-sm text-red-700 hover:underline" onClick={async () => {
        if (!confirm(`Delete the dataset "${name}"? Its file goes too.`)) return;
        const res = await fetch(`/api/datasets/${datasetId}`, { method: "DELETE" });
        if (!res.ok) return setError(((await res.json().catch(() => null)) as { error?: string } | null)?.error ?? `delete failed (${res.status})`);
        router.push(`/labs/${labId}/data`);
        router.refresh();
      }}>Delete dataset</button>
      {error && <span role="alert" className="text-sm text-red-700">{error}</span>}
    </span>
  );
}
