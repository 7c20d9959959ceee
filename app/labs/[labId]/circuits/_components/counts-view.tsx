"use client";

import useSWR from "swr";

import { Caution } from "@/app/_components/caution";
import { TableHead } from "@/app/_components/table-head";

import { fetchJson, type AnalysisJson, type CountsJson } from "./fetch-json";
import { formatNumber, showAmount } from "./format";

/** Below this many molecules at steady state, discreteness dominates (rule of thumb, PRODUCT.md: "about 10"). */
const LOW_COPY = 10;
const LOW_COPY_TEXT = "low copy number: discrete noise dominates; the mean-field trace may mislead";

/** A unit for display: µM for uM, nothing for a dimensionless "1". */
const showUnit = (unit: string): string => (unit === "1" ? "" : unit.replace(/uM/g, "µM"));

/**
 * The Counts view of one version: Ω, every initial amount and rate constant in molecules, and a
 * warning beside each species whose steady state (from the stability analysis, or the initial
 * count when that fails) is below about 10 molecules.
 */
export function CountsView({ versionId }: { versionId: string }) {
  const counts = useSWR<CountsJson>(`/api/versions/${versionId}/counts`, fetchJson);
  const analysis = useSWR<AnalysisJson>(`/api/versions/${versionId}/analysis`, fetchJson, { shouldRetryOnError: false });

  if (counts.error) return <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">Counts could not be computed: {counts.error.message}</p>;
  if (!counts.data) return <CountsSkeleton />;
  const c = counts.data;
  const amount = showAmount(c.amount_unit);
  // A circuit written in molecules has nothing to convert: one "Initial (molecules)" column, not two.
  const inMolecules = c.amount_unit === "molecules";
  const steadyFrom: "analysis" | "initial" | "pending" = analysis.data ? "analysis" : analysis.error ? "initial" : "pending";
  const steadyMolecules = (id: string, initialMolecules: number): number | null => {
    if (analysis.data) {
      const ss = analysis.data.steady_state[id];
      return ss === undefined ? null : ss * c.omega;
    }
    return analysis.error ? initialMolecules : null;
  };

  return (
    <div className="flex flex-col gap-5">
      <section aria-labelledby="omega-h" className="rounded-lg border border-ink/10 bg-white p-4">
        <h2 id="omega-h" className="font-semibold">Conversion factor</h2>
        <p className="mt-1 text-lg" data-testid="omega">
          Ω = <strong className="tabular-nums">{formatNumber(c.omega, 6)}</strong>{" "}
          {c.amount_unit === "molecules" ? "(amounts are already molecules)" : showUnit(c.omega_unit)}
        </p>
        <p className="mt-1 text-sm text-ink-soft">
          {c.amount_unit === "molecules"
            ? "Nothing is scaled: initial amounts and constants are used as written."
            : `Ω = V · N_A · 1 ${amount}, with cell volume V = ${formatNumber(c.volume_fL, 6)} fL and N_A = 6.02214076 × 10²³ per mol. An amount a in ${amount} is a·Ω molecules; the engine rounds initial amounts to whole molecules.`}
          {" "}Time is in {c.time_unit}.
        </p>
      </section>

      <section aria-labelledby="species-counts-h" className="flex flex-col gap-2">
        <h2 id="species-counts-h" className="font-semibold">Species</h2>
        <p className="text-sm text-ink-soft">
          {steadyFrom === "analysis" && "Steady state from the stability analysis (mean field), converted with Ω."}
          {steadyFrom === "initial" && `The stability analysis failed (${analysis.error?.message}); the low-copy check uses the initial counts instead.`}
          {steadyFrom === "pending" && "Steady state: computing…"}
        </p>
        <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
          <table className="w-full min-w-[640px] text-sm">
            <caption className="sr-only">Species in molecules</caption>
            <TableHead columns={["Species", ...(inMolecules ? [] : [{ label: `Initial (${amount})`, numeric: true }]), { label: "Initial (molecules)", numeric: true }, { label: "Initial count", numeric: true }, { label: "Steady state (molecules)", numeric: true }, "Note"]} />
            <tbody>
              {c.species.map((s) => {
                const ss = steadyMolecules(s.id, s.count);
                const low = ss !== null && ss < LOW_COPY;
                return (
                  <tr key={s.id} className="border-t border-ink/10" data-testid={`counts-row-${s.id}`}>
                    <th scope="row" className="px-3 py-2 text-left font-medium">{s.id}</th>
                    {!inMolecules && <td className="px-3 py-2 text-right tabular-nums">{formatNumber(s.initial)}</td>}
                    <td className="px-3 py-2 text-right tabular-nums">{formatNumber(s.molecules)}</td>
                    <td className="px-3 py-2 text-right tabular-nums">{s.count}</td>
                    <td className="px-3 py-2 text-right tabular-nums">{steadyFrom === "pending" ? <span className="inline-block h-3 w-12 animate-pulse rounded bg-ink/10" /> : formatNumber(ss)}</td>
                    <td className="px-3 py-2">
                      {low && (
                        <span className="inline-flex items-start gap-1 rounded bg-ochre-light px-2 py-0.5 text-xs text-ochre-dark" data-testid="low-copy">
                          <span aria-hidden>⚠</span> {LOW_COPY_TEXT}
                        </span>
                      )}
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      </section>

      <section aria-labelledby="constants-h" className="flex flex-col gap-2">
        <h2 id="constants-h" className="font-semibold">Rate constants</h2>
        <p className="text-sm text-ink-soft" data-testid="constants-formulas">
          Each constant as written and as the stochastic engine uses it, in molecules. Mass action of order m: c = k·Πν!/Ω^(m−1)
          (Gillespie 1977); Hill laws: vmax, K and basal times Ω, n as written; a free-form rate f: a(x) = Ω·f(x/Ω).
        </p>
        <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
          <table className="w-full min-w-[720px] text-sm">
            <caption className="sr-only">Rate constants in molecules</caption>
            <TableHead columns={["Reaction", "Constant", { label: "As written", numeric: true }, { label: "In molecules", numeric: true }, "Note"]} />
            <tbody>
              {c.constants.map((k, i) => (
                <tr key={`${k.reaction}-${k.name}-${i}`} className="border-t border-ink/10">
                  <td className="px-3 py-2"><span className="font-medium">{k.reaction}</span> <span className="text-xs text-ink-soft">{k.law.replace("_", " ")}</span></td>
                  <td className="px-3 py-2">{k.name}{k.parameter && <span className="text-ink-soft"> = {k.parameter}</span>}</td>
                  <td className="px-3 py-2 text-right tabular-nums whitespace-nowrap">{k.value === null ? "—" : `${formatNumber(k.value)} ${showUnit(k.unit)}`}</td>
                  <td className="px-3 py-2 text-right tabular-nums whitespace-nowrap">{k.molecules === null ? "—" : `${formatNumber(k.molecules)} ${showUnit(k.molecules_unit)}`}</td>
                  <td className="px-3 py-2 text-xs text-ink-soft">{k.note}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>
      <Caution />
    </div>
  );
}

export function CountsSkeleton() {
  return (
    <div className="flex flex-col gap-4" aria-busy="true" aria-label="Loading the counts view">
      <div className="h-24 animate-pulse rounded-lg bg-ink/5" />
      <div className="h-40 animate-pulse rounded-lg bg-ink/5" />
      <div className="h-56 animate-pulse rounded-lg bg-ink/5" />
    </div>
  );
}
