"use client";

import { useRouter } from "next/navigation";
import { useId, useMemo, useRef, useState } from "react";

import { CircuitWiring } from "@/app/_components/circuit-wiring";
import {
  circuitIssues, circuitToForm, describeField, fieldKey, formToCircuitJson, indexIssues, listIssues, newRowKey, parseStoichiometry,
  RATE_LAWS, type CircuitForm, type ParameterRow, type RateLawName, type ReactionRow, type ScheduleRow, type SpeciesRow,
} from "@/lib/view/circuit-form";
import { extractWiring } from "@/lib/view/circuit-wiring";
import { parseCircuit } from "@/lib/schemas/circuit";
import { countsTable } from "@/ssa/model";
import type { Circuit } from "@/ssa/types";

import { EditorField, EditorSelect, inputId } from "./editor-field";
import { showAmount } from "./format";

export interface CircuitEditorProps {
  labId: string;
  circuitId: string;
  versionId: string;
  versionNumber: number;
  latestNumber: number;
  circuit: Circuit;
  canWrite: boolean;
  /** Set right after a save landed on this version, to say so. */
  justSaved: boolean;
}

const LAW_LABEL: Record<RateLawName, string> = {
  mass_action: "Mass action",
  hill_activation: "Hill activation",
  hill_repression: "Hill repression",
  expression: "Formula",
};

/** JSON with sorted keys, to tell an edited circuit from the version it started from. */
function canonical(value: unknown): string {
  return JSON.stringify(value, (_k, v) =>
    v && typeof v === "object" && !Array.isArray(v)
      ? Object.fromEntries(Object.keys(v).sort().map((k) => [k, (v as Record<string, unknown>)[k]]))
      : v,
  );
}

type Status = { kind: "saved" | "same" | "error"; text: string; issues?: string[] } | null;

const uniqueId = (base: string, taken: string[]) => {
  for (let i = 1; ; i++) if (!taken.includes(`${base}${i}`)) return `${base}${i}`;
};

/**
 * The circuit editor: forms for settings, species, parameters and reactions with each problem
 * beside its input (live, through the circuit schema), a raw JSON view, the wiring drawn from the
 * draft, and saving as a new version. Reviewers get the same view with every control disabled.
 */
export function CircuitEditor(props: CircuitEditorProps) {
  const router = useRouter();
  const uid = useId().replace(/[^A-Za-z0-9_-]/g, "");
  const [form, setForm] = useState<CircuitForm>(() => circuitToForm(props.circuit));
  const [mode, setMode] = useState<"form" | "json">("form");
  const [jsonText, setJsonText] = useState("");
  const [modeError, setModeError] = useState<string | null>(null);
  const [message, setMessage] = useState("");
  const [saving, setSaving] = useState(false);
  const [status, setStatus] = useState<Status>(props.justSaved ? { kind: "saved", text: `Saved as version ${props.versionNumber}.` } : null);
  const lastValid = useRef<Circuit>(props.circuit);

  const draft = useMemo(() => formToCircuitJson(form), [form]);
  const jsonParsed = useMemo((): { ok: true; value: unknown } | { ok: false; reason: string } => {
    if (mode !== "json") return { ok: true, value: null };
    try {
      return { ok: true, value: JSON.parse(jsonText) };
    } catch (e) {
      return { ok: false, reason: e instanceof Error ? e.message : "not valid JSON" };
    }
  }, [mode, jsonText]);
  const current: unknown = mode === "form" ? draft.json : jsonParsed.ok ? jsonParsed.value : undefined;
  const schemaIssues = useMemo(() => (current === undefined ? [] : circuitIssues(current)), [current]);
  const byField = useMemo(() => indexIssues(form, mode === "form" ? draft.issues : [], mode === "form" ? schemaIssues : []), [form, draft, schemaIssues, mode]);
  const problems: { field: string | null; text: string }[] =
    mode === "form"
      ? listIssues(form, draft.issues, schemaIssues).map((i) => ({ field: i.field, text: i.message }))
      : [...(jsonParsed.ok ? [] : [{ field: null, text: `JSON: ${jsonParsed.reason}` }]), ...schemaIssues.map((t) => ({ field: null, text: t }))];
  const valid = useMemo((): Circuit | null => {
    if (current === undefined || problems.length > 0) return null;
    try {
      return parseCircuit(current);
    } catch {
      return null;
    }
  }, [current, problems.length]);
  if (valid) lastValid.current = valid;
  const shown = valid ?? lastValid.current;
  const isDirty = current === undefined || canonical(current) !== canonical(props.circuit);
  const wiring = useMemo(() => extractWiring(shown), [shown]);
  const parameterUnits = useMemo(() => {
    const units = new Map<string, Set<string>>();
    try {
      for (const c of countsTable(shown).constants) {
        if (!c.parameter) continue;
        const set = units.get(c.parameter) ?? new Set<string>();
        set.add(c.unit);
        units.set(c.parameter, set);
      }
    } catch {
      // a circuit the engine cannot compile yet (e.g. an override-free bound problem): no hints
    }
    return units;
  }, [shown]);

  const issues = (key: string) => byField.get(key);
  const time = form.time || "time";
  const amount = form.amount ? showAmount(form.amount) : "amount";
  const speciesListId = `${uid}-species`;
  const paramListId = `${uid}-params`;

  const patch = (fn: (f: CircuitForm) => CircuitForm) => {
    setForm(fn);
    if (status?.kind !== "error") setStatus(null);
  };
  const setSpecies = (key: string, p: Partial<SpeciesRow>) => patch((f) => ({ ...f, species: f.species.map((s) => (s.key === key ? { ...s, ...p } : s)) }));
  const setParam = (key: string, p: Partial<ParameterRow>) => patch((f) => ({ ...f, parameters: f.parameters.map((s) => (s.key === key ? { ...s, ...p } : s)) }));
  const setChange = (key: string, p: Partial<ScheduleRow>) => patch((f) => ({ ...f, schedule: f.schedule.map((s) => (s.key === key ? { ...s, ...p } : s)) }));
  const setReaction = (key: string, p: Partial<ReactionRow>) => patch((f) => ({ ...f, reactions: f.reactions.map((s) => (s.key === key ? { ...s, ...p } : s)) }));

  const switchMode = (next: "form" | "json") => {
    if (next === mode) return;
    if (next === "json") {
      setJsonText(JSON.stringify(draft.json, null, 2));
      setModeError(null);
      setMode("json");
      return;
    }
    if (!jsonParsed.ok) {
      setModeError(`Fix the JSON first (${jsonParsed.reason}); the form can only show a readable file.`);
      return;
    }
    setForm(circuitToForm(jsonParsed.value, newRowKey("s")));
    setModeError(null);
    setMode("form");
  };

  const save = async () => {
    if (current === undefined || problems.length > 0) return;
    setSaving(true);
    setStatus(null);
    try {
      const res = await fetch(`/api/circuits/${props.circuitId}/versions`, {
        method: "POST",
        headers: { "content-type": "application/json" },
        body: JSON.stringify({ circuit: current, message: message.trim() || undefined }),
      });
      const body = (await res.json().catch(() => null)) as { version_id?: string; number?: number; created?: boolean; error?: string; issues?: string[] } | null;
      if (res.status === 201 && body?.version_id) {
        router.push(`/labs/${props.labId}/circuits/${props.circuitId}?version=${body.version_id}&saved=1`);
        router.refresh();
        return;
      }
      if (res.ok && body?.created === false) {
        setStatus({ kind: "same", text: `No change: this circuit is identical to version ${body.number}, so no version was made.` });
      } else {
        setStatus({ kind: "error", text: body?.error ?? `Saving failed (${res.status}).`, issues: body?.issues });
      }
    } catch {
      setStatus({ kind: "error", text: "Saving failed: the server did not answer." });
    } finally {
      setSaving(false);
    }
  };

  const kHint = (r: ReactionRow) => {
    const st = parseStoichiometry(r.reactants);
    if (!st.ok) return undefined;
    const order = Object.values(st.value).reduce((a, b) => a + b, 0);
    const exp = 1 - order;
    if (exp === 0) return `1/${time} (first order)`;
    if (exp === 1) return `${amount}/${time} (zeroth order)`;
    return `1/(${amount}${-exp > 1 ? `^${-exp}` : ""}·${time}) (order ${order})`;
  };

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_360px]">
      <datalist id={speciesListId}>{form.species.map((s) => <option key={s.key} value={s.id} />)}</datalist>
      <datalist id={paramListId}>{form.parameters.map((p) => <option key={p.key} value={p.name} />)}</datalist>
      <div className="flex min-w-0 flex-col gap-5">
        <div className="flex flex-wrap items-center gap-3">
          <div role="group" aria-label="Editing view" className="inline-flex overflow-hidden rounded-md border border-ink/20 text-sm">
            {(["form", "json"] as const).map((m) => (
              <button
                key={m} type="button" aria-pressed={mode === m} onClick={() => switchMode(m)}
                className={`px-3 py-1.5 ${mode === m ? "bg-ink text-white" : "bg-white text-ink hover:bg-paper"}`}
              >
                {m === "form" ? "Form" : "Raw JSON"}
              </button>
            ))}
          </div>
          {props.versionNumber !== props.latestNumber && props.canWrite && (
            <p className="text-sm text-ink-soft">Editing version {props.versionNumber}: saving makes version {props.latestNumber + 1} from it.</p>
          )}
          {!props.canWrite && <p className="text-sm text-ink-soft">Read-only: a reviewer reads circuits and changes nothing.</p>}
        </div>
        {modeError && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{modeError}</p>}

        {mode === "json" ? (
          <div className="flex flex-col gap-2">
            <label htmlFor={`${uid}-json`} className="text-sm font-medium">Circuit file (burstwise.circuit/1, or /2 with a schedule)</label>
            <textarea
              id={`${uid}-json`} value={jsonText} readOnly={!props.canWrite} spellCheck={false}
              onChange={(e) => { setJsonText(e.target.value); setStatus(null); }}
              aria-invalid={problems.length > 0 || undefined} aria-describedby={problems.length ? `${uid}-json-issues` : undefined}
              className="min-h-[28rem] w-full rounded-md border border-ink/25 bg-white p-3 font-mono text-xs leading-relaxed"
            />
            {problems.length > 0 && (
              <ul id={`${uid}-json-issues`} className="list-inside list-disc text-sm text-red-700" data-testid="json-issues">
                {problems.map((p) => <li key={p.text}>{p.text}</li>)}
              </ul>
            )}
          </div>
        ) : (
          <fieldset disabled={!props.canWrite} className="flex min-w-0 flex-col gap-5">
            <legend className="sr-only">Circuit</legend>
            {byField.get("circuit") && <p role="alert" className="text-sm text-red-700">{byField.get("circuit")!.join("; ")}</p>}

            <section aria-labelledby={`${uid}-about`} className="rounded-lg border border-ink/10 bg-white p-4">
              <h2 id={`${uid}-about`} className="mb-3 font-semibold">Name and units</h2>
              <div className="grid gap-3 sm:grid-cols-2">
                <EditorField fieldKey="name" label="Name" value={form.name} issues={issues("name")} onChange={(v) => patch((f) => ({ ...f, name: v }))} />
                <EditorField
                  fieldKey="volume_fL" label="Cell volume (fL)" value={form.volumeFL} inputMode="decimal" issues={issues("volume_fL")}
                  hint={form.amount === "molecules" ? "optional when amounts are molecules" : "converts concentrations to molecules"}
                  onChange={(v) => patch((f) => ({ ...f, volumeFL: v }))}
                />
                <EditorSelect
                  fieldKey="units.time" label="Time unit" value={form.time} issues={issues("units.time")}
                  options={[{ value: "s", label: "seconds (s)" }, { value: "min", label: "minutes (min)" }, { value: "h", label: "hours (h)" }]}
                  onChange={(v) => patch((f) => ({ ...f, time: v }))}
                />
                <EditorSelect
                  fieldKey="units.amount" label="Amount unit" value={form.amount} issues={issues("units.amount")}
                  options={[{ value: "nM", label: "nM" }, { value: "uM", label: "µM" }, { value: "molecules", label: "molecules" }]}
                  onChange={(v) => patch((f) => ({ ...f, amount: v }))}
                />
                <EditorField
                  fieldKey="description" label="Description" multiline className="sm:col-span-2" value={form.description}
                  issues={issues("description")} onChange={(v) => patch((f) => ({ ...f, description: v }))}
                />
              </div>
            </section>

            <section aria-labelledby={`${uid}-species-h`} className="rounded-lg border border-ink/10 bg-white p-4">
              <h2 id={`${uid}-species-h`} className="mb-3 font-semibold">Species <span className="text-sm font-normal text-ink-soft">initial amounts in {amount}</span></h2>
              {byField.get("species") && <p className="mb-2 text-sm text-red-700">{byField.get("species")!.join("; ")}</p>}
              <ul className="flex flex-col gap-2">
                {form.species.map((s, i) => (
                  <li key={s.key} className="grid grid-cols-[minmax(0,1fr)_minmax(0,1fr)_auto] items-start gap-2">
                    <EditorField
                      fieldKey={fieldKey.species(s.key, "id")} label="Species id" labelSuffix={`(row ${i + 1})`} hideLabel={i > 0}
                      value={s.id} issues={issues(fieldKey.species(s.key, "id"))} onChange={(v) => setSpecies(s.key, { id: v })}
                    />
                    <EditorField
                      fieldKey={fieldKey.species(s.key, "initial")} label={`Initial amount (${amount})`} labelSuffix={`of ${s.id || `row ${i + 1}`}`} hideLabel={i > 0}
                      value={s.initial} inputMode="decimal" issues={issues(fieldKey.species(s.key, "initial"))} onChange={(v) => setSpecies(s.key, { initial: v })}
                    />
                    {props.canWrite && (
                      <RemoveButton label={`Remove species ${s.id || i + 1}`} first={i === 0} onClick={() => patch((f) => ({ ...f, species: f.species.filter((x) => x.key !== s.key) }))} />
                    )}
                    {issues(fieldKey.species(s.key)) && <p className="col-span-3 text-xs text-red-700">{issues(fieldKey.species(s.key))!.join("; ")}</p>}
                  </li>
                ))}
              </ul>
              {props.canWrite && (
                <AddButton onClick={() => patch((f) => ({ ...f, species: [...f.species, { key: newRowKey("s"), id: uniqueId("S", f.species.map((x) => x.id)), initial: "0", extra: {} }] }))}>
                  Add species
                </AddButton>
              )}
            </section>

            <section aria-labelledby={`${uid}-params-h`} className="rounded-lg border border-ink/10 bg-white p-4">
              <h2 id={`${uid}-params-h`} className="mb-1 font-semibold">Parameters</h2>
              <p className="mb-3 text-xs text-ink-soft">
                Named numbers that rate laws refer to. Unit and note are text for readers and change no number; an empty unit shows, greyed, the unit that follows from where the parameter is used.
              </p>
              {byField.get("parameters") && <p className="mb-2 text-sm text-red-700">{byField.get("parameters")!.join("; ")}</p>}
              {form.parameters.length === 0 && <p className="text-sm text-ink-soft">No parameters: every rate uses literal numbers.</p>}
              <ul className="flex flex-col gap-2">
                {form.parameters.map((p, i) => {
                  const units = parameterUnits.get(p.name.trim());
                  const inferred = units ? [...units].map((u) => (u === "1" ? "dimensionless" : u.replace(/uM/g, "µM"))).join(" and ") : undefined;
                  const label = p.name || `parameter ${i + 1}`;
                  return (
                    <li
                      key={p.key}
                      className="grid grid-cols-[minmax(0,1fr)_minmax(0,1fr)_auto] items-start gap-2 sm:grid-cols-[minmax(0,0.8fr)_minmax(0,0.8fr)_minmax(0,1fr)_minmax(0,1.6fr)_auto]"
                    >
                      <EditorField
                        fieldKey={fieldKey.parameter(p.key, "name")} label="Name" labelSuffix={`of parameter ${i + 1}`} hideLabel={i > 0}
                        value={p.name} issues={issues(fieldKey.parameter(p.key, "name"))} onChange={(v) => setParam(p.key, { name: v })}
                      />
                      <EditorField
                        fieldKey={fieldKey.parameter(p.key, "value")} label="Value" labelSuffix={`of ${label}`} hideLabel={i > 0}
                        value={p.value} inputMode="decimal" issues={issues(fieldKey.parameter(p.key, "value"))} onChange={(v) => setParam(p.key, { value: v })}
                      />
                      <EditorField
                        fieldKey={fieldKey.parameter(p.key, "unit")} label="Unit" labelSuffix={`of ${label}`} hideLabel={i > 0}
                        className="col-start-1 row-start-2 sm:col-start-auto sm:row-start-auto"
                        value={p.unit} placeholder={inferred} issues={issues(fieldKey.parameter(p.key, "unit"))} onChange={(v) => setParam(p.key, { unit: v })}
                      />
                      <EditorField
                        fieldKey={fieldKey.parameter(p.key, "note")} label="Note" labelSuffix={`of ${label}`} hideLabel={i > 0}
                        className="col-start-2 row-start-2 sm:col-start-auto sm:row-start-auto"
                        value={p.note} issues={issues(fieldKey.parameter(p.key, "note"))} onChange={(v) => setParam(p.key, { note: v })}
                      />
                      {props.canWrite && (
                        <RemoveButton
                          label={`Remove parameter ${p.name || i + 1}`} first={i === 0}
                          className="col-start-3 row-start-1 sm:col-start-auto sm:row-start-auto"
                          onClick={() => patch((f) => ({ ...f, parameters: f.parameters.filter((x) => x.key !== p.key) }))}
                        />
                      )}
                    </li>
                  );
                })}
              </ul>
              {props.canWrite && (
                <AddButton onClick={() => patch((f) => ({ ...f, parameters: [...f.parameters, { key: newRowKey("p"), name: uniqueId("p", f.parameters.map((x) => x.name)), value: "1", unit: "", note: "" }] }))}>
                  Add parameter
                </AddButton>
              )}
            </section>

            <section aria-labelledby={`${uid}-reactions-h`} className="rounded-lg border border-ink/10 bg-white p-4">
              <h2 id={`${uid}-reactions-h`} className="mb-1 font-semibold">Reactions</h2>
              <p className="mb-3 text-xs text-ink-soft">
                Write each side as <code>A + 2 B</code>; leave it empty for none (production from nothing, or loss). Rate fields take a number or a parameter name.
              </p>
              {byField.get("reactions") && <p className="mb-2 text-sm text-red-700">{byField.get("reactions")!.join("; ")}</p>}
              <ol className="flex flex-col gap-3">
                {form.reactions.map((r, i) => {
                  const name = r.id || `reaction ${i + 1}`;
                  const rk = (f: string) => fieldKey.reaction(r.key, f);
                  const isHill = r.law === "hill_activation" || r.law === "hill_repression";
                  return (
                    <li key={r.key} className="rounded-md border border-ink/10 bg-paper/60 p-3" aria-label={`Reaction ${name}`}>
                      <div className="grid grid-cols-1 items-start gap-2 sm:grid-cols-[minmax(0,0.8fr)_minmax(0,1fr)_auto_minmax(0,1fr)]">
                        <EditorField fieldKey={rk("id")} label="Reaction id" labelSuffix={`(reaction ${i + 1})`} value={r.id} issues={issues(rk("id"))} onChange={(v) => setReaction(r.key, { id: v })} />
                        <EditorField fieldKey={rk("reactants")} label="Reactants" labelSuffix={`of ${name}`} placeholder="∅" value={r.reactants} issues={issues(rk("reactants"))} list={speciesListId} onChange={(v) => setReaction(r.key, { reactants: v })} />
                        <span aria-hidden className="hidden pt-6 text-ink-soft sm:block">→</span>
                        <EditorField fieldKey={rk("products")} label="Products" labelSuffix={`of ${name}`} placeholder="∅" value={r.products} issues={issues(rk("products"))} list={speciesListId} onChange={(v) => setReaction(r.key, { products: v })} />
                      </div>
                      <div className="mt-2 grid grid-cols-2 items-start gap-2 sm:grid-cols-3 md:grid-cols-6">
                        <EditorSelect
                          fieldKey={rk("rate.law")} label="Rate law" labelSuffix={`of ${name}`} value={r.law} issues={issues(rk("rate.law"))} className="col-span-2 sm:col-span-1 md:col-span-2"
                          options={RATE_LAWS.map((l) => ({ value: l, label: LAW_LABEL[l] }))}
                          onChange={(v) => setReaction(r.key, { law: v as RateLawName, input: isHillLaw(v) && !r.input ? (form.species[0]?.id ?? "") : r.input })}
                        />
                        {r.law === "mass_action" && (
                          <EditorField fieldKey={rk("rate.k")} label="k" labelSuffix={`of ${name}`} value={r.k} list={paramListId} hint={kHint(r)} issues={issues(rk("rate.k"))} className="md:col-span-2" onChange={(v) => setReaction(r.key, { k: v })} />
                        )}
                        {isHill && (
                          <>
                            <EditorField fieldKey={rk("rate.input")} label="Input species" labelSuffix={`of ${name}`} value={r.input} list={speciesListId} issues={issues(rk("rate.input"))} onChange={(v) => setReaction(r.key, { input: v })} />
                            <EditorField fieldKey={rk("rate.vmax")} label="vmax" labelSuffix={`of ${name}`} value={r.vmax} list={paramListId} hint={`${amount}/${time}`} issues={issues(rk("rate.vmax"))} onChange={(v) => setReaction(r.key, { vmax: v })} />
                            <EditorField fieldKey={rk("rate.K")} label="K" labelSuffix={`of ${name}`} value={r.K} list={paramListId} hint={amount} issues={issues(rk("rate.K"))} onChange={(v) => setReaction(r.key, { K: v })} />
                            <EditorField fieldKey={rk("rate.n")} label="n" labelSuffix={`of ${name}`} value={r.n} list={paramListId} hint="Hill coefficient" issues={issues(rk("rate.n"))} onChange={(v) => setReaction(r.key, { n: v })} />
                            <EditorField
                              fieldKey={rk("rate.basal")} label="Basal leak" labelSuffix={`of ${name}`} value={r.basal} list={paramListId} placeholder="none"
                              hint={`${amount}/${time}, optional`} issues={issues(rk("rate.basal"))} onChange={(v) => setReaction(r.key, { basal: v })}
                            />
                          </>
                        )}
                        {r.law === "expression" && (
                          <EditorField
                            fieldKey={rk("rate.expression")} label="Formula" labelSuffix={`of ${name}`} value={r.expression} className="col-span-2 sm:col-span-2 md:col-span-4"
                            inputClassName="font-mono" placeholder="e.g. vA / (1 + (C/K)^n)"
                            hint={`rate in ${amount}/${time}: species and parameter names, + − * / ^, exp log sqrt min max pow, t, piecewise(value, A < 10, otherwise)`}
                            issues={issues(rk("rate.expression"))} onChange={(v) => setReaction(r.key, { expression: v })}
                          />
                        )}
                      </div>
                      {issues(fieldKey.reaction(r.key)) && <p className="mt-1 text-xs font-medium text-red-700">{issues(fieldKey.reaction(r.key))!.join("; ")}</p>}
                      {props.canWrite && (
                        <div className="mt-2 text-right">
                          <button type="button" onClick={() => patch((f) => ({ ...f, reactions: f.reactions.filter((x) => x.key !== r.key) }))} className="text-sm text-red-700 hover:underline">
                            Remove reaction<span className="sr-only"> {name}</span>
                          </button>
                        </div>
                      )}
                    </li>
                  );
                })}
              </ol>
              {props.canWrite && (
                <AddButton
                  onClick={() => patch((f) => ({
                    ...f,
                    reactions: [...f.reactions, {
                      key: newRowKey("r"), id: uniqueId("reaction_", f.reactions.map((x) => x.id)), reactants: "", products: f.species[0]?.id ?? "",
                      law: "mass_action", k: f.parameters[0]?.name ?? "", input: "", vmax: "", K: "", n: "", basal: "", expression: "",
                      emptyReactants: false, emptyProducts: false, extra: {},
                    }],
                  }))}
                >
                  Add reaction
                </AddButton>
              )}
            </section>

            <section aria-labelledby={`${uid}-schedule-h`} className="rounded-lg border border-ink/10 bg-white p-4">
              <h2 id={`${uid}-schedule-h`} className="mb-1 font-semibold">Schedule</h2>
              <p className="mb-3 text-xs text-ink-soft">
                Changes during a run: at a time ({time}), or each time a condition on species turns true (then after an optional delay). A change sets species
                amounts ({amount}) or parameter values, written <code>km = 2, P = 0</code>; times, delays and values take a number or a parameter name.
              </p>
              {byField.get("schedule") && <p className="mb-2 text-sm text-red-700">{byField.get("schedule")!.join("; ")}</p>}
              {form.schedule.length === 0 && <p className="text-sm text-ink-soft">No schedule: inputs stay as set for the whole run.</p>}
              <ol className="flex flex-col gap-2">
                {form.schedule.map((ch, i) => {
                  const ck = (f: "at" | "when" | "delay" | "set") => fieldKey.change(ch.key, f);
                  const label = `change ${i + 1}`;
                  return (
                    <li key={ch.key} aria-label={`Schedule ${label}`} className="grid grid-cols-2 items-start gap-2 rounded-md border border-ink/10 bg-paper/60 p-3 md:grid-cols-[minmax(0,0.9fr)_minmax(0,1.2fr)_minmax(0,0.6fr)_minmax(0,1.4fr)_auto]">
                      <EditorSelect
                        fieldKey={fieldKey.change(ch.key, "kind")} label="Kind" labelSuffix={`of ${label}`} value={ch.kind}
                        options={[{ value: "at", label: "At a time" }, { value: "when", label: "When a condition holds" }]}
                        onChange={(v) => setChange(ch.key, { kind: v === "when" ? "when" : "at" })}
                      />
                      {ch.kind === "at" ? (
                        <EditorField fieldKey={ck("at")} label={`Time (${time})`} labelSuffix={`of ${label}`} value={ch.at} list={paramListId} inputMode="decimal" issues={issues(ck("at"))} onChange={(v) => setChange(ch.key, { at: v })} />
                      ) : (
                        <EditorField fieldKey={ck("when")} label="Condition" labelSuffix={`of ${label}`} value={ch.when} inputClassName="font-mono" placeholder="e.g. P > 300" issues={issues(ck("when"))} onChange={(v) => setChange(ch.key, { when: v })} />
                      )}
                      {ch.kind === "when" ? (
                        <EditorField fieldKey={ck("delay")} label={`Delay (${time})`} labelSuffix={`of ${label}`} value={ch.delay} list={paramListId} placeholder="0" issues={issues(ck("delay"))} onChange={(v) => setChange(ch.key, { delay: v })} />
                      ) : <span className="hidden md:block" />}
                      <EditorField fieldKey={ck("set")} label="Sets" labelSuffix={`of ${label}`} value={ch.set} inputClassName="font-mono" placeholder="km = 2, P = 0" issues={issues(ck("set"))} onChange={(v) => setChange(ch.key, { set: v })} />
                      {props.canWrite && (
                        <RemoveButton label={`Remove schedule ${label}`} first onClick={() => patch((f) => ({ ...f, schedule: f.schedule.filter((x) => x.key !== ch.key) }))} />
                      )}
                      {issues(fieldKey.change(ch.key)) && <p className="col-span-full text-xs text-red-700">{issues(fieldKey.change(ch.key))!.join("; ")}</p>}
                    </li>
                  );
                })}
              </ol>
              {props.canWrite && (
                <AddButton onClick={() => patch((f) => ({ ...f, schedule: [...f.schedule, { key: newRowKey("c"), kind: "at", at: "0", when: "", delay: "", set: f.parameters[0] ? `${f.parameters[0].name} = ${f.parameters[0].value}` : "", extra: {} }] }))}>
                  Add change
                </AddButton>
              )}
            </section>
          </fieldset>
        )}
      </div>

      <aside className="flex min-w-0 flex-col gap-4 lg:sticky lg:top-4 lg:self-start">
        {props.canWrite && (
          <section aria-labelledby={`${uid}-save-h`} className="rounded-lg border border-ink/10 bg-white p-4">
            <h2 id={`${uid}-save-h`} className="mb-2 font-semibold">Save a version</h2>
            <p className="mb-2 text-sm text-ink-soft" data-testid="draft-state">
              {problems.length > 0
                ? `${problems.length} problem${problems.length === 1 ? "" : "s"} to fix before saving.`
                : isDirty ? "Unsaved changes." : `No changes since version ${props.versionNumber}.`}
            </p>
            <label htmlFor={`${uid}-msg`} className="text-xs font-medium text-ink-soft">Message (optional)</label>
            <input
              id={`${uid}-msg`} value={message} maxLength={500} onChange={(e) => setMessage(e.target.value)} placeholder="what changed, and why"
              className="mt-0.5 w-full rounded-md border border-ink/25 px-2 py-1.5 text-sm"
            />
            <div className="mt-3 flex flex-wrap gap-2">
              <button
                type="button" onClick={save} disabled={saving || problems.length > 0}
                className="rounded-md bg-ochre px-4 py-2 text-sm font-medium text-white hover:bg-ochre-dark disabled:cursor-not-allowed disabled:opacity-50"
              >
                {saving ? "Saving…" : "Save version"}
              </button>
              {isDirty && (
                <button
                  type="button" onClick={() => { setForm(circuitToForm(props.circuit, newRowKey("r"))); setJsonText(JSON.stringify(props.circuit, null, 2)); setStatus(null); }}
                  className="rounded-md border border-ink/20 px-3 py-2 text-sm hover:bg-paper"
                >
                  Discard changes
                </button>
              )}
            </div>
            {status && (
              <div role={status.kind === "error" ? "alert" : "status"} className={`mt-3 rounded-md px-3 py-2 text-sm ${status.kind === "error" ? "bg-red-50 text-red-800" : status.kind === "saved" ? "bg-moss-light text-moss" : "bg-paper text-ink"}`}>
                {status.text}
                {status.issues && status.issues.length > 1 && (
                  <ul className="mt-1 list-inside list-disc">{status.issues.map((t) => <li key={t}>{t}</li>)}</ul>
                )}
              </div>
            )}
          </section>
        )}
        {!props.canWrite && status && <div role="status" className="rounded-md bg-moss-light px-3 py-2 text-sm text-moss">{status.text}</div>}

        {mode === "form" && problems.length > 0 && (
          <section aria-labelledby={`${uid}-problems-h`} className="rounded-lg border border-red-200 bg-red-50 p-4">
            <h2 id={`${uid}-problems-h`} className="mb-1 text-sm font-semibold text-red-800">Problems</h2>
            <ul className="flex flex-col gap-1 text-sm text-red-800" data-testid="problem-list">
              {problems.map((p, i) => (
                <li key={`${p.field}-${i}`}>
                  {p.field && <span className="font-medium">{describeField(p.field, form)}: </span>}
                  {p.field && !["circuit", "species", "parameters", "reactions", "schedule"].includes(p.field) && !/^(species|parameters|reactions|schedule)\.[^.]+$/.test(p.field) ? (
                    <a
                      href={`#${inputId(p.field)}`} className="text-red-800 underline"
                      onClick={(e) => {
                        const target = document.getElementById(inputId(p.field!));
                        if (!target) return;
                        e.preventDefault();
                        target.focus();
                        target.scrollIntoView({ block: "center" });
                      }}
                    >
                      {p.text}
                    </a>
                  ) : p.text}
                </li>
              ))}
            </ul>
          </section>
        )}

        <section aria-labelledby={`${uid}-wiring-h`} className="rounded-lg border border-ink/10 bg-white p-4">
          <h2 id={`${uid}-wiring-h`} className="mb-2 font-semibold">Wiring</h2>
          {!valid && problems.length > 0 && <p className="mb-2 text-xs text-ink-soft">Showing the last valid draft while problems remain.</p>}
          <CircuitWiring wiring={wiring} title={form.name || "this circuit"} />
        </section>
      </aside>
    </div>
  );
}

const isHillLaw = (law: string) => law === "hill_activation" || law === "hill_repression";

function AddButton({ onClick, children }: { onClick: () => void; children: React.ReactNode }) {
  return (
    <button type="button" onClick={onClick} className="mt-3 rounded-md border border-dashed border-ink/30 px-3 py-1.5 text-sm text-ink hover:border-ochre hover:bg-paper">
      + {children}
    </button>
  );
}

function RemoveButton({ label, onClick, first, className = "" }: { label: string; onClick: () => void; first: boolean; className?: string }) {
  return (
    <button type="button" aria-label={label} title={label} onClick={onClick} className={`rounded-md px-2 py-1.5 text-ink-soft hover:bg-red-50 hover:text-red-700 ${first ? "mt-4" : ""} ${className}`}>
      ✕
    </button>
  );
}
