"use client";

import { useState } from "react";

import { fetchJson } from "@/app/_components/run-api";
import { MODEL_CAVEAT, type ComparisonJson, type DifferenceJson, type DifferenceTestJson } from "@/lib/view/comparison-view";
import { formatNumber } from "@/lib/view/run-view";

const select = "rounded-md border border-ink/25 bg-white px-2 py-1.5 text-sm";

const formatP = (p: number | null) => (p == null ? "—" : p < 0.001 ? "< 0.001" : formatNumber(p, 2));

function Verdict({ what, d }: { what: string; d: DifferenceJson & { significant: boolean } }) {
  const lower = (d.difference ?? 0) < 0;
  return (
    <li>
      <strong className="text-ink">{what}</strong>: B − A = {formatNumber(d.difference)} (95% interval {formatNumber(d.lo)} to {formatNumber(d.hi)}), p = {formatP(d.p_value)}.{" "}
      <span data-testid={`verdict-${what === "CV" ? "cv" : "period"}`} className="font-medium text-ink">
        {d.significant ? (lower ? `Yes: B's ${what} is lower than A's.` : `No: B's ${what} is higher than A's.`) : `No clear difference in ${what} at the 5% level.`}
      </span>
    </li>
  );
}

/** "Is B less noisy than A?": two designs and a species in, the bootstrap test of the CV and period-CV differences out. */
export function DifferenceTest({ c, species }: { c: ComparisonJson; species: string }) {
  const designs = c.results!.designs;
  const bestPeriod = [...designs].sort((x, y) => (x.species.find((s) => s.species === species)?.period_cv?.value ?? Infinity) - (y.species.find((s) => s.species === species)?.period_cv?.value ?? Infinity))[0];
  const [a, setA] = useState(designs[0]?.design_id ?? "");
  const [b, setB] = useState((bestPeriod && bestPeriod.design_id !== designs[0]?.design_id ? bestPeriod : designs[1])?.design_id ?? "");
  const [result, setResult] = useState<DifferenceTestJson | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const run = async (e: React.FormEvent) => {
    e.preventDefault();
    setBusy(true);
    setError(null);
    try {
      setResult(await fetchJson<DifferenceTestJson>(`/api/comparisons/${c.id}/test?${new URLSearchParams({ a, b, species })}`));
    } catch (err) {
      setResult(null);
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };

  return (
    <section aria-labelledby="test-h" className="flex flex-col gap-3 rounded-lg border border-ink/10 bg-white p-4">
      <h2 id="test-h" className="text-lg font-semibold">Is B less noisy than A?</h2>
      <form onSubmit={run} className="flex flex-wrap items-end gap-3" aria-label="Difference test">
        <div className="flex flex-col gap-1">
          <label htmlFor="test-a" className="text-xs font-medium">Design A</label>
          <select id="test-a" value={a} onChange={(e) => setA(e.target.value)} className={select}>
            {designs.map((d) => <option key={d.design_id} value={d.design_id}>{d.label}</option>)}
          </select>
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="test-b" className="text-xs font-medium">Design B</label>
          <select id="test-b" value={b} onChange={(e) => setB(e.target.value)} className={select}>
            {designs.map((d) => <option key={d.design_id} value={d.design_id}>{d.label}</option>)}
          </select>
        </div>
        <p className="pb-2 text-sm text-ink-soft">species {species}</p>
        <button type="submit" disabled={busy || a === b} className="rounded-md bg-ochre px-3 py-1.5 text-sm font-medium text-white hover:bg-ochre-dark disabled:opacity-50">
          {busy ? "Testing…" : "Test"}
        </button>
      </form>
      {a === b && <p className="text-xs text-ink-soft">Choose two different designs.</p>}
      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{error}</p>}
      {result && (
        <div data-testid="test-result" className="flex flex-col gap-2 text-sm">
          <ul className="flex list-disc flex-col gap-1 pl-5 text-ink-soft">
            <Verdict what="CV" d={result.cv} />
            {result.period_cv ? <Verdict what="period CV" d={result.period_cv} /> : <li>{result.period_note}</li>}
          </ul>
          <p className="text-xs text-ink-soft">
            A = {result.a.label}, B = {result.b.label}. Percentile bootstrap over cells, {result.replicates} replicates,
            {result.paired ? " paired cells (both designs ran with the same seed: common random numbers)" : " each design's cells resampled on their own"}; two-sided p-value.
          </p>
        </div>
      )}
      <p role="note" className="text-xs text-ink-soft">{MODEL_CAVEAT}</p>
    </section>
  );
}
