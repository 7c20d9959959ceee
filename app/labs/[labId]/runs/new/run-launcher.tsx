"use client";

import { useRouter } from "next/navigation";
import { useEffect, useMemo, useRef, useState } from "react";

import { ApiError, fetchJson } from "@/app/_components/run-api";
import { EVENTS_PER_S_PER_THREAD, costPerCell, estimateRunCost, formatCellEvents, type CostEstimate } from "@/lib/view/run-cost";
import { formatDuration, formatNumber, splitApiError } from "@/lib/view/run-view";
import { describeIssue } from "@/lib/schemas/common";
import { RunLaunch } from "@/lib/schemas/run-options";
import { RUN_LIMITS } from "@/lib/schemas/runs";
import { omegaFor } from "@/ssa/model-core";
import { MAX_TAU_EPSILON, TAU_EPSILON, type Circuit } from "@/ssa/types";

export interface RunLauncherProps {
  labId: string;
  version: { id: string; number: number; circuitId: string; circuitName: string; contentHash: string };
  circuit: Circuit;
  /** A random seed drawn by the server, so the first render matches in the browser. */
  initialSeed: number;
  /** The queued-work budget (cell-events) and what the lab and the user have queued when the page was drawn. */
  budget: { lab: number; user: number; labQueued: number; userQueued: number };
}

type Method = "ode" | "ssa" | "tau";
interface OverrideRow { key: number; name: string; value: string }

const METHODS: { value: Method; label: string; text: string }[] = [
  { value: "ssa", label: "Direct Gillespie", text: "Exact stochastic simulation, one reaction event at a time." },
  { value: "tau", label: "Tau-leaping", text: "Leaps over many events at once: faster at high counts, approximate." },
  { value: "ode", label: "Trace", text: "The deterministic mean-field path (ODE): the average cell, no noise." },
];

/** Text → number for the request body: empty stays undefined, anything unparsable becomes NaN (and fails validation). */
const num = (s: string): number | undefined => (s.trim() === "" ? undefined : Number(s));

/** A random seed in [1, 2³¹) from the browser's CSPRNG. */
function newSeed(): number {
  const a = new Uint32Array(1);
  crypto.getRandomValues(a);
  return (a[0] % (2 ** 31 - 1)) + 1;
}

/** Fields of the form an API error can name; anything else is shown above the launch button. */
const FORM_FIELDS = new Set(["method", "t_end", "dt", "runs", "seed", "burn_in", "units", "tau_epsilon"]);

function NumberInput(props: {
  id: string; label: string; value: string; onChange: (v: string) => void; unit?: string; hint?: React.ReactNode;
  error?: string; step?: string; disabled?: boolean; children?: React.ReactNode;
}) {
  const hintId = `${props.id}-hint`;
  const errId = `${props.id}-err`;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={props.id} className="text-sm font-medium">{props.label}{props.unit && <span className="font-normal text-ink-soft"> ({props.unit})</span>}</label>
      <div className="flex gap-2">
        <input
          id={props.id} inputMode="decimal" value={props.value} disabled={props.disabled} onChange={(e) => props.onChange(e.target.value)}
          aria-invalid={props.error ? true : undefined}
          aria-describedby={[props.hint ? hintId : "", props.error ? errId : ""].filter(Boolean).join(" ") || undefined}
          className="w-full min-w-0 rounded-md border border-ink/25 bg-white px-3 py-2 tabular-nums text-ink disabled:bg-paper disabled:text-ink-soft aria-[invalid]:border-red-600"
        />
        {props.children}
      </div>
      {props.hint && <p id={hintId} className="text-xs text-ink-soft">{props.hint}</p>}
      {props.error && <p id={errId} className="text-sm text-red-700">{props.error}</p>}
    </div>
  );
}

/** The run launcher: method, grid, cells, seed, burn-in, overrides and units, with the expected cost before launch. */
export function RunLauncher({ labId, version, circuit, initialSeed, budget }: RunLauncherProps) {
  const router = useRouter();
  const timeUnit = circuit.units.time;
  const modelAmount = circuit.units.amount;
  const parameters = useMemo(() => circuit.parameters ?? {}, [circuit]);
  const paramNames = Object.keys(parameters);

  const [method, setMethod] = useState<Method>("ssa");
  const [tEnd, setTEnd] = useState("200");
  const [dt, setDt] = useState("1");
  const [cells, setCells] = useState("1000");
  const [seed, setSeed] = useState(String(initialSeed));
  const [burnIn, setBurnIn] = useState<string | null>(null); // null: the engine chooses it from the circuit (ssa/burn-in.ts)
  const [overrides, setOverrides] = useState<OverrideRow[]>([]);
  const [units, setUnits] = useState<"molecules" | "model" | null>(null); // null: the method's default
  const [tauEpsilon, setTauEpsilon] = useState(String(TAU_EPSILON));
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const nextKey = useRef(1);

  const isTrace = method === "ode";
  const tEndNum = num(tEnd);
  const burnInText = burnIn ?? "";
  const effectiveUnits = units ?? (isTrace ? "model" : "molecules");
  const omega = useMemo(() => {
    try {
      return omegaFor(modelAmount, circuit.volume_fL);
    } catch {
      return null;
    }
  }, [modelAmount, circuit.volume_fL]);
  const dtNum = num(dt);
  const gridPoints = tEndNum && dtNum && tEndNum > 0 && dtNum > 0 && dtNum <= tEndNum ? Math.floor(tEndNum / dtNum + 1e-9) + 1 : null;

  const overrideValues = useMemo(() => Object.fromEntries(overrides.filter((o) => o.name).map((o) => [o.name, num(o.value) ?? NaN])), [overrides]);

  const body = () => ({
    version_id: version.id,
    method,
    t_end: tEndNum,
    dt: dtNum,
    ...(isTrace ? {} : { runs: num(cells), seed: num(seed) }),
    // Left out unless typed: the worker then takes 5 relaxation times of the circuit (at least t_end / 5).
    ...(burnIn === null || burnIn.trim() === "" ? {} : { burn_in: num(burnIn) }),
    ...(overrides.length ? { overrides: overrideValues } : {}),
    ...(method === "tau" ? { tau_epsilon: num(tauEpsilon) } : {}),
    units: effectiveUnits,
  });

  // Expected cost, recomputed a moment after the inputs settle (an ODE solve in the browser).
  const [computed, setComputed] = useState<{ key: string; estimate?: CostEstimate; error?: string } | null>(null);
  const cellsNum = isTrace ? 1 : num(cells);
  const costKey = JSON.stringify({ method, tEndNum, cellsNum, overrideValues });
  const costInputsValid = Boolean(tEndNum && tEndNum > 0 && Number.isFinite(tEndNum) && cellsNum && Number.isInteger(cellsNum) && cellsNum > 0);
  const cost = computed?.key === costKey ? computed : null;
  useEffect(() => {
    if (!costInputsValid || !tEndNum || !cellsNum) return;
    const h = setTimeout(() => {
      try {
        setComputed({ key: costKey, estimate: estimateRunCost(circuit, { method, tEnd: tEndNum, cells: cellsNum, overrides: overrides.length ? overrideValues : undefined }) });
      } catch (e) {
        setComputed({ key: costKey, error: e instanceof Error ? e.message : String(e) });
      }
    }, 300);
    return () => clearTimeout(h);
  }, [costKey, circuit]); // costKey stands for every input the estimate reads

  const showErrors = (messages: string[]) => {
    const next: Record<string, string> = {};
    const general: string[] = [];
    for (const m of messages) {
      const { field, reason } = splitApiError(m);
      if (field && (FORM_FIELDS.has(field) || field.startsWith("overrides."))) next[field] ??= reason;
      else if (/after overrides$/.test(reason)) next.overrides ??= m;
      else general.push(m);
    }
    setErrors(next);
    setFormError(general.length ? general.join("; ") : null);
  };

  const launch = async (e: React.FormEvent) => {
    e.preventDefault();
    const b = body();
    const local = RunLaunch.safeParse(b); // the schema the route parses
    if (!local.success) {
      showErrors(local.error.issues.map((i) => describeIssue(i)));
      return;
    }
    setBusy(true);
    showErrors([]);
    try {
      const r = await fetchJson<{ id: string; seed: number }>("/api/runs", { method: "POST", body: b });
      router.push(`/labs/${labId}/runs/${r.id}`);
    } catch (err) {
      setBusy(false);
      if (err instanceof ApiError && err.status === 429) setFormError(err.message);
      else showErrors([err instanceof Error ? err.message : String(err)]);
    }
  };

  const usedNames = new Set(overrides.map((o) => o.name));
  const addOverride = () => {
    const name = paramNames.find((p) => !usedNames.has(p));
    if (!name) return;
    setOverrides([...overrides, { key: nextKey.current++, name, value: String(parameters[name]) }]);
  };

  return (
    <form onSubmit={launch} noValidate className="grid gap-6 lg:grid-cols-[1fr_20rem]" aria-label="Run settings">
      <div className="flex flex-col gap-6">
        <section className="rounded-lg border border-ink/10 bg-white p-4 text-sm">
          <h2 className="text-base font-semibold">{version.circuitName} <span className="font-normal text-ink-soft">· version {version.number}</span></h2>
          <p className="mt-1 text-ink-soft">
            Time in <strong className="text-ink">{timeUnit}</strong>; amounts in <strong className="text-ink">{modelAmount}</strong>
            {circuit.volume_fL !== undefined && <> in a {circuit.volume_fL} fL cell</>}
            {omega !== null && modelAmount !== "molecules" && <> (Ω = {formatNumber(omega)} molecules per {modelAmount})</>}.
            {" "}{circuit.species.length} species, {circuit.reactions.length} reactions. Content hash <code className="text-xs">{version.contentHash.slice(0, 12)}</code>.
          </p>
        </section>

        <fieldset className="flex flex-col gap-2">
          <legend className="mb-1 text-sm font-medium">Method</legend>
          <div className="grid gap-2 sm:grid-cols-3">
            {METHODS.map((m) => (
              <label key={m.value} className={`flex cursor-pointer gap-2 rounded-lg border bg-white p-3 text-sm ${method === m.value ? "border-ochre ring-1 ring-ochre" : "border-ink/15"}`}>
                <input type="radio" name="method" value={m.value} checked={method === m.value} onChange={() => setMethod(m.value)} className="mt-1 accent-ochre" />
                <span><span className="font-medium">{m.label}</span> <span className="text-xs text-ink-soft">({m.value})</span><span className="mt-0.5 block text-xs text-ink-soft">{m.text}</span></span>
              </label>
            ))}
          </div>
          {errors.method && <p className="text-sm text-red-700">{errors.method}</p>}
        </fieldset>

        <div className="grid gap-4 sm:grid-cols-2">
          <NumberInput id="t_end" label="End time" unit={timeUnit} value={tEnd} onChange={setTEnd} error={errors.t_end} />
          <NumberInput id="dt" label="Sampling step" unit={timeUnit} value={dt} onChange={setDt} error={errors.dt}
            hint={gridPoints && dtNum ? `${gridPoints.toLocaleString("en-US")} grid points: 0, ${dtNum}, ${Number((2 * dtNum).toPrecision(12))}, … ${tEndNum}` : `Grid 0, dt, 2dt, … t_end; at most ${RUN_LIMITS.maxGridPoints.toLocaleString("en-US")} points`} />
          <NumberInput id="runs" label="Cells" value={isTrace ? "1" : cells} onChange={setCells} disabled={isTrace} error={errors.runs}
            hint={isTrace ? "A trace is one deterministic path." : `Cells in the ensemble, 1 to ${RUN_LIMITS.maxCells.toLocaleString("en-US")}.`} />
          <NumberInput id="seed" label="Seed" value={isTrace ? "" : seed} onChange={setSeed} disabled={isTrace} error={errors.seed}
            hint={isTrace ? "A trace uses no random numbers." : "The same seed and settings give the same ensemble; cell i replays from (seed, i)."}>
            <button type="button" disabled={isTrace} onClick={() => setSeed(String(newSeed()))}
              className="shrink-0 rounded-md border border-ink/20 bg-white px-3 text-sm hover:border-ochre disabled:opacity-40">New seed</button>
          </NumberInput>
          <NumberInput id="burn_in" label="Burn-in" unit={timeUnit} value={burnInText} onChange={(v) => setBurnIn(v)} error={errors.burn_in}
            hint={<>Stationary statistics and periods use grid times ≥ burn-in. {burnIn === null || burnIn.trim() === "" ? "Empty: 5 × the circuit's slowest relaxation time, at least t_end / 5 and at most t_end / 2." : <button type="button" className="text-ochre-dark underline" onClick={() => setBurnIn(null)}>Back to the automatic burn-in</button>}</>} />
          {method === "tau" && (
            <NumberInput id="tau_epsilon" label="Leap tolerance ε" value={tauEpsilon} onChange={setTauEpsilon} error={errors.tau_epsilon}
              hint={`How much a propensity may change within one leap (Cao, Gillespie & Petzold 2006). Default ${TAU_EPSILON}; at most ${MAX_TAU_EPSILON}. Larger is faster and less exact.`} />
          )}
          <fieldset className="flex flex-col gap-1">
            <legend className="text-sm font-medium">Output amounts</legend>
            {modelAmount === "molecules" ? (
              <p className="py-2 text-sm text-ink-soft">Molecules (the circuit&apos;s own unit).</p>
            ) : (
              <div className="flex flex-wrap gap-4 py-2 text-sm">
                <label className="flex items-center gap-2"><input type="radio" name="units" className="accent-ochre" checked={effectiveUnits === "molecules"} onChange={() => setUnits("molecules")} /> Molecules</label>
                <label className="flex items-center gap-2"><input type="radio" name="units" className="accent-ochre" checked={effectiveUnits === "model"} onChange={() => setUnits("model")} /> {modelAmount} (circuit units)</label>
              </div>
            )}
            {errors.units && <p className="text-sm text-red-700">{errors.units}</p>}
          </fieldset>
        </div>

        <fieldset className="flex flex-col gap-2">
          <legend className="text-sm font-medium">Parameter overrides</legend>
          <p className="text-xs text-ink-soft">Change parameters for this run only; the saved version stays as it is and the run records what it changed.</p>
          {overrides.map((o, k) => (
            <div key={o.key} className="flex flex-wrap items-start gap-2">
              <label className="sr-only" htmlFor={`ov-name-${o.key}`}>Parameter of override {k + 1}</label>
              <select id={`ov-name-${o.key}`} value={o.name} className="rounded-md border border-ink/25 bg-white px-2 py-2 text-sm"
                onChange={(e) => setOverrides(overrides.map((x) => (x.key === o.key ? { ...x, name: e.target.value, value: String(parameters[e.target.value]) } : x)))}>
                {paramNames.filter((p) => p === o.name || !usedNames.has(p)).map((p) => <option key={p} value={p}>{p}</option>)}
              </select>
              <div className="flex flex-col gap-1">
                <label className="sr-only" htmlFor={`ov-value-${o.key}`}>Value of {o.name}</label>
                <input id={`ov-value-${o.key}`} inputMode="decimal" value={o.value} aria-invalid={errors[`overrides.${o.name}`] ? true : undefined}
                  onChange={(e) => setOverrides(overrides.map((x) => (x.key === o.key ? { ...x, value: e.target.value } : x)))}
                  className="w-32 rounded-md border border-ink/25 bg-white px-3 py-2 text-sm tabular-nums aria-[invalid]:border-red-600" />
                {errors[`overrides.${o.name}`] && <p className="text-sm text-red-700">{errors[`overrides.${o.name}`]}</p>}
              </div>
              <span className="py-2 text-sm text-ink-soft">saved value {formatNumber(parameters[o.name], 6)}</span>
              <button type="button" onClick={() => setOverrides(overrides.filter((x) => x.key !== o.key))} className="py-2 text-sm text-red-700 hover:underline">
                Remove<span className="sr-only"> override of {o.name}</span>
              </button>
            </div>
          ))}
          {errors.overrides && <p className="text-sm text-red-700">{errors.overrides}</p>}
          <div>
            <button type="button" onClick={addOverride} disabled={overrides.length >= paramNames.length}
              className="rounded-md border border-ink/20 bg-white px-3 py-1.5 text-sm hover:border-ochre disabled:opacity-40">
              Add override
            </button>
            {paramNames.length === 0 && <span className="ml-2 text-xs text-ink-soft">This circuit has no named parameters.</span>}
          </div>
        </fieldset>
      </div>

      <aside className="flex flex-col gap-4 lg:sticky lg:top-4 lg:self-start">
        <section aria-labelledby="cost-h" data-testid="cost-estimate" className="rounded-lg border border-ink/10 bg-white p-4 text-sm">
          <h2 id="cost-h" className="font-semibold">Expected cost</h2>
          {isTrace ? (
            <p className="mt-1 text-ink-soft">A trace is one ODE solve with error control: usually well under a second.</p>
          ) : !costInputsValid ? (
            <p className="mt-1 text-ink-soft">Enter an end time and a whole number of cells.</p>
          ) : !cost ? (
            <p className="mt-1 text-ink-soft" aria-busy="true">Estimating…</p>
          ) : cost.error ? (
            <p className="mt-1 text-red-700">Cannot estimate: {cost.error}</p>
          ) : cost.estimate ? (
            <>
              <p className="mt-2 text-2xl font-semibold tabular-nums">≈ {formatDuration(cost.estimate.threadSeconds)}</p>
              <p className="text-ink-soft">of one thread</p>
              <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 tabular-nums">
                <dt className="text-ink-soft">Events per cell</dt><dd className="text-right">{formatNumber(cost.estimate.eventsPerCell, 3)}</dd>
                <dt className="text-ink-soft">× cells</dt><dd className="text-right">{formatNumber(cellsNum, 6)}</dd>
                <dt className="text-ink-soft">Events in all</dt><dd className="text-right">{formatNumber(cost.estimate.totalEvents, 3)}</dd>
              </dl>
              <p className="mt-3 text-xs text-ink-soft">
                {cost.estimate.basis === "mean-field path"
                  ? "Events per cell: the total propensity integrated along the mean-field path over the end time, with these parameters (exact on average for linear circuits; Hill terms and noise shift it)."
                  : "Events per cell: the total propensity at the initial counts × the end time (the mean-field path could not be solved)."}
                {" "}Time at about {(EVENTS_PER_S_PER_THREAD / 1e6).toLocaleString("en-US")} million events per second per thread; the worker spreads chunks of {RUN_LIMITS.chunkCells} cells over its threads.
                {method === "tau" && " Tau-leaping fires many events per leap, so it usually takes less."}
              </p>
              {gridPoints && cellsNum && <QueueBudget budget={budget} cost={costPerCell(cost.estimate.eventsPerCell, gridPoints) * cellsNum} />}
            </>
          ) : null}
        </section>
        {formError && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{formError}</p>}
        {Object.keys(errors).length > 0 && !formError && (
          <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">Fix the fields marked in red, then launch again.</p>
        )}
        <button type="submit" disabled={busy} className="rounded-md bg-ochre px-4 py-2.5 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
          {busy ? "Launching…" : isTrace ? "Launch trace" : "Launch ensemble"}
        </button>
      </aside>
    </form>
  );
}

/**
 * What this run would take of the lab's and the user's budget of queued work, as the server
 * counts it (lib/run-budget.ts): cells × (events per cell + grid points), in cell-events.
 */
function QueueBudget({ budget, cost }: { budget: RunLauncherProps["budget"]; cost: number }) {
  const rows = [
    { label: "Lab", queued: budget.labQueued, limit: budget.lab },
    { label: "You, over all labs", queued: budget.userQueued, limit: budget.user },
  ];
  const tooBig = cost > Math.min(budget.lab, budget.user);
  const over = rows.find((r) => r.queued + cost > r.limit);
  return (
    <div data-testid="queue-budget" className="mt-3 border-t border-ink/10 pt-3">
      <h3 className="font-medium">Queue budget</h3>
      <p className="text-xs text-ink-soft">This run counts as <strong className="text-ink" data-testid="run-cell-events">{formatCellEvents(cost)}</strong> cell-events (cells × (events per cell + grid points)) until it finishes.</p>
      <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-xs tabular-nums">
        {rows.map((r) => (
          <div key={r.label} className="contents">
            <dt className="text-ink-soft">{r.label}</dt>
            <dd className="text-right">{formatCellEvents(r.queued)} queued of {formatCellEvents(r.limit)}</dd>
          </div>
        ))}
      </dl>
      {tooBig ? (
        <p className="mt-2 text-xs text-red-700">Larger than the whole budget: use fewer cells, a shorter end time or a larger step.</p>
      ) : over ? (
        <p className="mt-2 text-xs text-red-700">{over.label === "Lab" ? "The lab's" : "Your"} queued work would pass its budget: wait for runs to finish or make this one smaller.</p>
      ) : null}
    </div>
  );
}
