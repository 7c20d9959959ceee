"use client";

import { useRouter } from "next/navigation";
import { useId, useState } from "react";

import { circuitIssues } from "@/lib/view/circuit-form";
import { CIRCUIT_TEMPLATES, getTemplate } from "@/lib/view/circuit-templates";

type Source = { kind: "template"; id: string } | { kind: "file" };
type Upload =
  | { kind: "circuit"; fileName: string; json: Record<string, unknown>; issues: string[] }
  | { kind: "sbml"; fileName: string; text: string }
  | { kind: "unreadable"; fileName: string; reason: string };

const MAX_UPLOAD_BYTES = 5_000_000;

/** Reads an uploaded file as a circuit file (JSON) or SBML (XML), by its first character. */
async function readUpload(file: File): Promise<Upload> {
  if (file.size > MAX_UPLOAD_BYTES) return { kind: "unreadable", fileName: file.name, reason: "larger than 5 MB" };
  const text = await file.text();
  const head = text.trimStart();
  if (head.startsWith("<")) return { kind: "sbml", fileName: file.name, text };
  try {
    const json: unknown = JSON.parse(text);
    if (typeof json !== "object" || json === null || Array.isArray(json)) {
      return { kind: "unreadable", fileName: file.name, reason: "the JSON is not an object (a circuit file is one)" };
    }
    return { kind: "circuit", fileName: file.name, json: json as Record<string, unknown>, issues: circuitIssues(json) };
  } catch {
    return { kind: "unreadable", fileName: file.name, reason: "neither JSON (a circuit file) nor XML (SBML)" };
  }
}

/**
 * "New circuit": from a blank circuit, a template or an uploaded file (circuit JSON or SBML),
 * named here, stored as version 1 through POST /api/circuits, then opened in the editor.
 */
export function CreateCircuit({ labId, existingNames }: { labId: string; existingNames: string[] }) {
  const router = useRouter();
  const uid = useId().replace(/[^A-Za-z0-9_-]/g, "");
  const [open, setOpen] = useState(false);
  const [source, setSource] = useState<Source>({ kind: "template", id: "ring-timer" });
  const [name, setName] = useState(CIRCUIT_TEMPLATES.find((t) => t.id === "ring-timer")?.circuit.name ?? "");
  const [upload, setUpload] = useState<Upload | null>(null);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<{ text: string; issues?: string[] } | null>(null);

  const pickTemplate = (id: string) => {
    setSource({ kind: "template", id });
    setName(getTemplate(id)?.name ?? "");
    setError(null);
  };
  const trimmed = name.trim();
  const nameTaken = existingNames.some((n) => n.toLowerCase() === trimmed.toLowerCase());
  const isSbml = source.kind === "file" && upload?.kind === "sbml";
  const blocked =
    busy || (!isSbml && trimmed === "") ||
    (source.kind === "file" && (upload === null || upload.kind === "unreadable" || (upload.kind === "circuit" && upload.issues.length > 0)));

  const create = async () => {
    setBusy(true);
    setError(null);
    let body: Record<string, unknown>;
    if (source.kind === "template") body = { lab_id: labId, circuit: { ...getTemplate(source.id), name: trimmed } };
    else if (upload?.kind === "circuit") body = { lab_id: labId, circuit: { ...upload.json, name: trimmed } };
    else if (upload?.kind === "sbml") body = { lab_id: labId, sbml: upload.text };
    else return setBusy(false);
    try {
      const res = await fetch("/api/circuits", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
      const data = (await res.json().catch(() => null)) as { id?: string; error?: string; issues?: string[] } | null;
      if (res.status === 201 && data?.id) {
        router.push(`/labs/${labId}/circuits/${data.id}`);
        return;
      }
      setError({ text: data?.error ?? `Creating failed (${res.status}).`, issues: data?.issues });
    } catch {
      setError({ text: "Creating failed: the server did not answer." });
    }
    setBusy(false);
  };

  if (!open) {
    return (
      <button type="button" onClick={() => setOpen(true)} aria-expanded={false} className="self-start rounded-md bg-ochre px-4 py-2 text-sm font-medium text-white hover:bg-ochre-dark">
        New circuit
      </button>
    );
  }
  return (
    <section aria-labelledby={`${uid}-h`} className="rounded-lg border border-ink/10 bg-white p-4">
      <div className="mb-3 flex items-center justify-between gap-3">
        <h2 id={`${uid}-h`} className="font-semibold">New circuit</h2>
        <button type="button" aria-expanded onClick={() => setOpen(false)} className="text-sm text-ink-soft hover:text-ink">Close</button>
      </div>
      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-sm font-medium">Start from</legend>
        <div className="grid gap-2 sm:grid-cols-2 lg:grid-cols-5">
          {CIRCUIT_TEMPLATES.map((t) => {
            const checked = source.kind === "template" && source.id === t.id;
            return (
              <label key={t.id} className={`flex cursor-pointer flex-col gap-1 rounded-md border p-3 text-sm ${checked ? "border-ochre bg-ochre-light/40" : "border-ink/15 hover:border-ink/40"}`}>
                <span className="flex items-center gap-2 font-medium">
                  <input type="radio" name={`${uid}-source`} value={t.id} checked={checked} onChange={() => pickTemplate(t.id)} />
                  {t.title}
                </span>
                <span className="text-xs text-ink-soft">{t.summary}</span>
              </label>
            );
          })}
          <label className={`flex cursor-pointer flex-col gap-1 rounded-md border p-3 text-sm ${source.kind === "file" ? "border-ochre bg-ochre-light/40" : "border-ink/15 hover:border-ink/40"}`}>
            <span className="flex items-center gap-2 font-medium">
              <input type="radio" name={`${uid}-source`} value="file" checked={source.kind === "file"} onChange={() => { setSource({ kind: "file" }); setError(null); }} />
              Upload a file
            </span>
            <span className="text-xs text-ink-soft">A circuit file (.json) or an SBML model (.xml).</span>
          </label>
        </div>
      </fieldset>

      {source.kind === "file" && (
        <div className="mt-3 flex flex-col gap-1">
          <label htmlFor={`${uid}-file`} className="text-sm font-medium">Circuit file or SBML</label>
          <input
            id={`${uid}-file`} type="file" accept=".json,.xml,.sbml,application/json,application/xml,text/xml"
            onChange={async (e) => {
              const f = e.target.files?.[0];
              setError(null);
              if (!f) return setUpload(null);
              const u = await readUpload(f);
              setUpload(u);
              if (u.kind === "circuit" && typeof u.json.name === "string") setName(u.json.name);
            }}
            className="text-sm"
          />
          {upload?.kind === "unreadable" && <p role="alert" className="text-sm text-red-700">{upload.fileName}: {upload.reason}.</p>}
          {upload?.kind === "sbml" && <p className="text-sm text-ink-soft">{upload.fileName}: SBML; Burstwise converts it and names the circuit after the model.</p>}
          {upload?.kind === "circuit" && upload.issues.length > 0 && (
            <div role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">
              {upload.fileName} is not a valid circuit file:
              <ul className="mt-1 list-inside list-disc">{upload.issues.map((t) => <li key={t}>{t}</li>)}</ul>
            </div>
          )}
          {upload?.kind === "circuit" && upload.issues.length === 0 && <p className="text-sm text-moss">{upload.fileName}: a valid circuit file.</p>}
        </div>
      )}

      {!isSbml && (
        <div className="mt-3 flex max-w-md flex-col gap-1">
          <label htmlFor={`${uid}-name`} className="text-sm font-medium">Circuit name</label>
          <input
            id={`${uid}-name`} value={name} maxLength={200} onChange={(e) => setName(e.target.value)}
            aria-invalid={nameTaken || undefined} aria-describedby={nameTaken ? `${uid}-name-err` : undefined}
            className="rounded-md border border-ink/25 px-3 py-1.5 text-sm aria-[invalid=true]:border-red-600"
          />
          {nameTaken && <p id={`${uid}-name-err`} className="text-sm text-red-700">The lab already has a circuit named &ldquo;{trimmed}&rdquo;.</p>}
        </div>
      )}

      {error && (
        <div role="alert" className="mt-3 rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">
          {error.text}
          {error.issues && error.issues.length > 1 && <ul className="mt-1 list-inside list-disc">{error.issues.map((t) => <li key={t}>{t}</li>)}</ul>}
        </div>
      )}
      <button
        type="button" onClick={create} disabled={blocked || nameTaken}
        className="mt-4 rounded-md bg-ochre px-4 py-2 text-sm font-medium text-white hover:bg-ochre-dark disabled:cursor-not-allowed disabled:opacity-50"
      >
        {busy ? "Creating…" : "Create circuit"}
      </button>
    </section>
  );
}
