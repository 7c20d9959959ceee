"use client";

import { useRouter } from "next/navigation";
import { useRef, useState } from "react";
import useSWR from "swr";

import { ApiError, fetchJson, jsonFetcher } from "@/app/_components/run-api";
import { describeIssue } from "@/lib/schemas/common";
import { COMPARISON_LIMITS, ComparisonCreate, sweepDesigns, sweepSize } from "@/lib/schemas/comparisons";
import type { Circuit } from "@/ssa/types";

export interface CircuitOption { id: string; name: string; versionId: string; versions: number }

interface DesignRowState { key: number; versionId: string; label: string; overrides: string }
interface AxisState { parameter: string; scale: "list" | "linear" | "log"; values: string; from: string; to: string; points: string }

const input = "rounded-md border border-ink/25 bg-white px-2 py-1.5 text-sm aria-[invalid=true]:border-red-600";
const num = (s: string): number | undefined => (s.trim() === "" ? undefined : Number(s));

/** "n=6, g=0.3" → { n: 6, g: 0.3 }; a malformed entry → its text (to name it in the error). */
function parseOverrides(text: string): Record<string, number> | string {
  const out: Record<string, number> = {};
  for (const part of text.split(/[,;\n]/).map((p) => p.trim()).filter(Boolean)) {
    const m = /^([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(\S+)$/.exec(part);
    if (!m || !Number.isFinite(Number(m[2]))) return part;
    out[m[1]!] = Number(m[2]);
  }
  return out;
}

const blankAxis = (parameter = ""): AxisState => ({ parameter, scale: "log", values: "", from: "", to: "", points: "4" });

function axisBody(a: AxisState) {
  if (a.scale === "list") return { parameter: a.parameter, scale: a.scale, values: a.values.split(/[,;\s]+/).filter(Boolean).map(Number) };
  return { parameter: a.parameter, scale: a.scale, from: num(a.from), to: num(a.to), points: num(a.points) };
}

/** The comparison set-up: designs or a sweep, shared ensemble settings, checked in the browser with the API's schema. */
export function ComparisonForm({ labId, circuits }: { labId: string; circuits: CircuitOption[] }) {
  const router = useRouter();
  const nextKey = useRef(3);
  const [name, setName] = useState("");
  const [description, setDescription] = useState("");
  const [mode, setMode] = useState<"designs" | "sweep">("designs");
  const first = circuits[0]?.versionId ?? "";
  const [designs, setDesigns] = useState<DesignRowState[]>([
    { key: 1, versionId: first, label: "", overrides: "" },
    { key: 2, versionId: circuits[1]?.versionId ?? first, label: "", overrides: "" },
  ]);
  const [base, setBase] = useState(first);
  const [baseOverrides, setBaseOverrides] = useState("");
  const [axes, setAxes] = useState<AxisState[]>([blankAxis()]);
  const [method, setMethod] = useState<"ssa" | "tau">("ssa");
  const [tEnd, setTEnd] = useState("500");
  const [dt, setDt] = useState("1");
  const [runs, setRuns] = useState("1000");
  const [burnIn, setBurnIn] = useState("");
  const [seed, setSeed] = useState("");
  const [commonSeed, setCommonSeed] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const baseCircuit = useSWR<Circuit>(mode === "sweep" && base ? `/api/versions/${base}` : null, jsonFetcher, { revalidateOnFocus: false });
  const parameters = Object.keys(baseCircuit.data?.parameters ?? {});

  const body = (launch: boolean): { body?: unknown; error?: string } => {
    const settings = {
      method, t_end: num(tEnd), dt: num(dt), runs: num(runs), common_seed: commonSeed,
      ...(num(burnIn) !== undefined ? { burn_in: num(burnIn) } : {}), ...(num(seed) !== undefined ? { seed: num(seed) } : {}),
    };
    const common = { lab_id: labId, name, ...(description.trim() ? { description } : {}), settings, launch };
    if (mode === "designs") {
      const list = [];
      for (const [i, d] of designs.entries()) {
        const o = parseOverrides(d.overrides);
        if (typeof o === "string") return { error: `designs[${i}].overrides: "${o}" is not name=value` };
        list.push({ version_id: d.versionId, ...(d.label.trim() ? { label: d.label.trim() } : {}), ...(Object.keys(o).length ? { overrides: o } : {}) });
      }
      return { body: { ...common, designs: list } };
    }
    const o = parseOverrides(baseOverrides);
    if (typeof o === "string") return { error: `sweep.overrides: "${o}" is not name=value` };
    return { body: { ...common, sweep: { version_id: base, ...(Object.keys(o).length ? { overrides: o } : {}), axes: axes.map(axisBody) } } };
  };

  // The sweep's designs as the API will make them, or the first problem with the sweep's fields.
  const preview = (() => {
    if (mode !== "sweep") return null;
    const b = body(false);
    if (b.error) return { problem: b.error };
    const parsed = ComparisonCreate.safeParse({ ...(b.body as object), name: name || "preview" });
    if (!parsed.success) {
      const issue = parsed.error.issues.find((i) => i.path[0] === "sweep");
      return issue && axes.every((a) => a.parameter) ? { problem: describeIssue(issue) } : null;
    }
    if (!parsed.data.sweep) return null;
    return { n: sweepSize(parsed.data.sweep), labels: sweepDesigns(parsed.data.sweep).map((d) => d.label) };
  })();

  const submit = async (launch: boolean) => {
    const b = body(launch);
    if (b.error) return setError(b.error);
    const local = ComparisonCreate.safeParse(b.body);
    if (!local.success) return setError(describeIssue(local.error.issues[0]!));
    setBusy(true);
    setError(null);
    try {
      const r = await fetchJson<{ id: string }>("/api/comparisons", { method: "POST", body: b.body });
      router.push(`/labs/${labId}/comparisons/${r.id}`);
    } catch (e) {
      setBusy(false);
      setError(e instanceof ApiError || e instanceof Error ? e.message : String(e));
    }
  };

  const setAxis = (i: number, patch: Partial<AxisState>) => setAxes(axes.map((a, k) => (k === i ? { ...a, ...patch } : a)));

  return (
    <form aria-label="Comparison settings" noValidate onSubmit={(e) => { e.preventDefault(); void submit(true); }} className="flex max-w-4xl flex-col gap-6">
      <section className="grid gap-3 sm:grid-cols-2">
        <div className="flex flex-col gap-1">
          <label htmlFor="c-name" className="text-sm font-medium">Name</label>
          <input id="c-name" value={name} onChange={(e) => setName(e.target.value)} className={input} maxLength={200} placeholder="e.g. Reporter promoters" />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-description" className="text-sm font-medium">Description <span className="font-normal text-ink-soft">(optional)</span></label>
          <input id="c-description" value={description} onChange={(e) => setDescription(e.target.value)} className={input} maxLength={2000} />
        </div>
      </section>

      <fieldset className="flex flex-col gap-3">
        <legend className="mb-1 text-sm font-medium">What to compare</legend>
        <div className="flex flex-wrap gap-4 text-sm">
          <label className="flex items-center gap-2"><input type="radio" name="mode" checked={mode === "designs"} onChange={() => setMode("designs")} className="accent-ochre" /> Designs listed one by one</label>
          <label className="flex items-center gap-2"><input type="radio" name="mode" checked={mode === "sweep"} onChange={() => setMode("sweep")} className="accent-ochre" /> A sweep of one parameter, or a grid of two</label>
        </div>

        {mode === "designs" ? (
          <div className="flex flex-col gap-2">
            {designs.map((d, i) => (
              <div key={d.key} className="grid items-end gap-2 rounded-lg border border-ink/10 bg-white p-3 sm:grid-cols-[1.4fr_1fr_1fr_auto]" data-testid="design-row">
                <div className="flex flex-col gap-1">
                  <label htmlFor={`d-${d.key}-v`} className="text-xs font-medium">Design {i + 1}: circuit</label>
                  <select id={`d-${d.key}-v`} value={d.versionId} onChange={(e) => setDesigns(designs.map((x) => (x.key === d.key ? { ...x, versionId: e.target.value } : x)))} className={input}>
                    {circuits.map((c) => <option key={c.versionId} value={c.versionId}>{c.name} (v{c.versions})</option>)}
                  </select>
                </div>
                <div className="flex flex-col gap-1">
                  <label htmlFor={`d-${d.key}-l`} className="text-xs font-medium">Design {i + 1}: label</label>
                  <input id={`d-${d.key}-l`} value={d.label} onChange={(e) => setDesigns(designs.map((x) => (x.key === d.key ? { ...x, label: e.target.value } : x)))} className={input} placeholder="from the circuit" maxLength={80} />
                </div>
                <div className="flex flex-col gap-1">
                  <label htmlFor={`d-${d.key}-o`} className="text-xs font-medium">Design {i + 1}: parameters changed</label>
                  <input id={`d-${d.key}-o`} value={d.overrides} onChange={(e) => setDesigns(designs.map((x) => (x.key === d.key ? { ...x, overrides: e.target.value } : x)))} className={input} placeholder="e.g. n=6, g=0.3" />
                </div>
                <button type="button" disabled={designs.length <= COMPARISON_LIMITS.minDesigns} onClick={() => setDesigns(designs.filter((x) => x.key !== d.key))}
                  className="rounded border border-ink/20 px-2 py-1.5 text-xs text-ink-soft hover:border-red-400 hover:text-red-700 disabled:opacity-40">
                  Remove<span className="sr-only"> design {i + 1}</span>
                </button>
              </div>
            ))}
            <div>
              <button type="button" disabled={designs.length >= COMPARISON_LIMITS.maxDesigns}
                onClick={() => setDesigns([...designs, { key: nextKey.current++, versionId: first, label: "", overrides: "" }])}
                className="rounded border border-ink/20 bg-white px-3 py-1.5 text-sm hover:border-ochre disabled:opacity-40">
                Add a design
              </button>
              <span className="ml-3 text-xs text-ink-soft">{designs.length} of at most {COMPARISON_LIMITS.maxDesigns}</span>
            </div>
          </div>
        ) : (
          <div className="flex flex-col gap-3 rounded-lg border border-ink/10 bg-white p-3">
            <div className="grid gap-2 sm:grid-cols-2">
              <div className="flex flex-col gap-1">
                <label htmlFor="s-base" className="text-xs font-medium">Circuit swept</label>
                <select id="s-base" value={base} onChange={(e) => { setBase(e.target.value); setAxes(axes.map((a) => ({ ...a, parameter: "" }))); }} className={input}>
                  {circuits.map((c) => <option key={c.versionId} value={c.versionId}>{c.name} (v{c.versions})</option>)}
                </select>
              </div>
              <div className="flex flex-col gap-1">
                <label htmlFor="s-fixed" className="text-xs font-medium">Parameters changed in every design <span className="font-normal text-ink-soft">(optional)</span></label>
                <input id="s-fixed" value={baseOverrides} onChange={(e) => setBaseOverrides(e.target.value)} className={input} placeholder="e.g. g=0.1" />
              </div>
            </div>
            {axes.map((a, i) => (
              <div key={i} className="grid items-end gap-2 sm:grid-cols-[1fr_0.9fr_2fr]" data-testid="sweep-axis">
                <div className="flex flex-col gap-1">
                  <label htmlFor={`a-${i}-p`} className="text-xs font-medium">{i === 0 ? "Swept parameter" : "Second parameter"}</label>
                  <select id={`a-${i}-p`} value={a.parameter} onChange={(e) => setAxis(i, { parameter: e.target.value })} className={input}>
                    <option value="">{baseCircuit.isLoading ? "Loading…" : "Choose…"}</option>
                    {parameters.map((p) => <option key={p} value={p}>{p} (now {String(baseCircuit.data?.parameters?.[p])})</option>)}
                  </select>
                </div>
                <div className="flex flex-col gap-1">
                  <label htmlFor={`a-${i}-s`} className="text-xs font-medium">Values</label>
                  <select id={`a-${i}-s`} value={a.scale} onChange={(e) => setAxis(i, { scale: e.target.value as AxisState["scale"] })} className={input}>
                    <option value="log">log range</option>
                    <option value="linear">linear range</option>
                    <option value="list">list</option>
                  </select>
                </div>
                {a.scale === "list" ? (
                  <div className="flex flex-col gap-1">
                    <label htmlFor={`a-${i}-v`} className="text-xs font-medium">List of values</label>
                    <input id={`a-${i}-v`} value={a.values} onChange={(e) => setAxis(i, { values: e.target.value })} className={input} placeholder="e.g. 2, 4, 6" />
                  </div>
                ) : (
                  <div className="grid grid-cols-3 gap-2">
                    <div className="flex flex-col gap-1">
                      <label htmlFor={`a-${i}-from`} className="text-xs font-medium">From</label>
                      <input id={`a-${i}-from`} inputMode="decimal" value={a.from} onChange={(e) => setAxis(i, { from: e.target.value })} className={input} />
                    </div>
                    <div className="flex flex-col gap-1">
                      <label htmlFor={`a-${i}-to`} className="text-xs font-medium">To</label>
                      <input id={`a-${i}-to`} inputMode="decimal" value={a.to} onChange={(e) => setAxis(i, { to: e.target.value })} className={input} />
                    </div>
                    <div className="flex flex-col gap-1">
                      <label htmlFor={`a-${i}-n`} className="text-xs font-medium">Points</label>
                      <input id={`a-${i}-n`} inputMode="numeric" value={a.points} onChange={(e) => setAxis(i, { points: e.target.value })} className={input} />
                    </div>
                  </div>
                )}
              </div>
            ))}
            <label className="flex items-center gap-2 text-sm">
              <input type="checkbox" checked={axes.length === 2} onChange={(e) => setAxes(e.target.checked ? [axes[0]!, blankAxis()] : [axes[0]!])} className="accent-ochre" />
              A grid of two parameters
            </label>
            <p className="text-xs text-ink-soft" aria-live="polite" data-testid="sweep-preview">
              {preview?.labels
                ? <>This sweep gives <strong className="text-ink">{preview.n} designs</strong>: {preview.labels.slice(0, 8).join(" · ")}{preview.labels.length > 8 ? " · …" : ""}</>
                : preview?.problem
                  ? <span className="text-red-700">{preview.problem}</span>
                  : `Choose a parameter and its values (at most ${COMPARISON_LIMITS.maxDesigns} designs in all; log ranges need positive ends).`}
            </p>
          </div>
        )}
      </fieldset>

      <fieldset className="grid gap-3 rounded-lg border border-ink/10 bg-white p-3 sm:grid-cols-3">
        <legend className="px-1 text-sm font-medium">Ensemble settings, the same for every design</legend>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-method" className="text-xs font-medium">Method</label>
          <select id="c-method" value={method} onChange={(e) => setMethod(e.target.value as "ssa" | "tau")} className={input}>
            <option value="ssa">Direct Gillespie (exact)</option>
            <option value="tau">Tau-leaping (approximate, faster for large counts)</option>
          </select>
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-tend" className="text-xs font-medium">End time</label>
          <input id="c-tend" inputMode="decimal" value={tEnd} onChange={(e) => setTEnd(e.target.value)} className={input} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-dt" className="text-xs font-medium">Sampling step</label>
          <input id="c-dt" inputMode="decimal" value={dt} onChange={(e) => setDt(e.target.value)} className={input} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-runs" className="text-xs font-medium">Cells per design</label>
          <input id="c-runs" inputMode="numeric" value={runs} onChange={(e) => setRuns(e.target.value)} className={input} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-burnin" className="text-xs font-medium">Burn-in <span className="font-normal text-ink-soft">(default: end time / 5)</span></label>
          <input id="c-burnin" inputMode="decimal" value={burnIn} onChange={(e) => setBurnIn(e.target.value)} className={input} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="c-seed" className="text-xs font-medium">Seed <span className="font-normal text-ink-soft">(blank: drawn for you)</span></label>
          <input id="c-seed" inputMode="numeric" value={seed} onChange={(e) => setSeed(e.target.value)} className={input} />
        </div>
        <label className="flex items-start gap-2 text-sm sm:col-span-3">
          <input type="checkbox" checked={commonSeed} onChange={(e) => setCommonSeed(e.target.checked)} className="mt-1 accent-ochre" />
          <span>Same seed for every design (common random numbers): cell <em>i</em> of each design draws the same random stream, which sharpens differences; the test then pairs cells.</span>
        </label>
        <p className="text-xs text-ink-soft sm:col-span-3">Times in the circuits&apos; own time unit. Amounts are reported in molecules. Intervals: {Math.round(COMPARISON_LIMITS.level * 100)}% percentile bootstrap over cells, {COMPARISON_LIMITS.replicates} replicates.</p>
      </fieldset>

      {error && <p role="alert" data-testid="form-error" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{error}</p>}
      <div className="flex flex-wrap gap-3">
        <button type="submit" disabled={busy} className="rounded-md bg-ochre px-4 py-2 text-sm font-medium text-white hover:bg-ochre-dark disabled:opacity-50">
          {busy ? "Starting…" : "Create and run"}
        </button>
        <button type="button" disabled={busy} onClick={() => void submit(false)} className="rounded-md border border-ink/20 bg-white px-4 py-2 text-sm hover:border-ochre disabled:opacity-50">
          Save as draft
        </button>
      </div>
    </form>
  );
}
