"use client";

import { useMemo } from "react";
import useSWR from "swr";

import { jsonFetcher } from "@/app/_components/run-api";
import { TableHead } from "@/app/_components/table-head";
import { WarningMark, warningsAbout } from "@/app/_components/warning-list";
import { formatInterval, formatNumber, sdOf, type AnalysisJson, type IntervalStat, type MomentsJson, type RunJson, type SummaryJson } from "@/lib/view/run-view";
import { predictLna } from "@/ssa/lna-prediction";
import type { Circuit } from "@/ssa/types";

export interface LnaState {
  /** LNA CV and Fano in the summary's units (Fano divided by Ω for model units), or null. */
  lna: AnalysisJson["lna"] | null;
  /** What the LNA columns mean here, or why they are empty. */
  note: string;
  loading: boolean;
}

/**
 * The linear noise approximation to set beside the ensemble: the stored version's analysis when the
 * run used the saved parameters, otherwise analyze() in the browser with the run's overrides.
 */
export function useLna(run: RunJson, summary: SummaryJson): LnaState {
  const overrides = run.settings.overrides;
  const hasOverrides = Boolean(overrides && Object.keys(overrides).length);
  const analysis = useSWR<AnalysisJson>(!hasOverrides ? `/api/versions/${run.version_id}/analysis` : null, jsonFetcher, { revalidateOnFocus: false });
  const circuit = useSWR<Circuit>(hasOverrides ? `/api/versions/${run.version_id}` : null, jsonFetcher, { revalidateOnFocus: false });
  const local = useMemo(() => {
    if (!hasOverrides || !circuit.data) return null;
    const p = predictLna(circuit.data, overrides);
    return p.analysis ? { result: p.analysis as AnalysisJson } : { error: p.error ?? "no steady state" };
  }, [hasOverrides, circuit.data, overrides]);

  const result = hasOverrides ? local?.result : analysis.data;
  const error = hasOverrides ? (local?.error ?? circuit.error?.message) : analysis.error?.message;
  const loading = !result && !error;
  const where = hasOverrides ? "with this run's overrides (computed in your browser)" : "for the saved parameters";
  if (error) return { lna: null, note: `No LNA: ${error}`, loading: false };
  if (!result) return { lna: null, note: "Computing the LNA…", loading };
  if (!result.lna) {
    return { lna: null, note: `No LNA: the steady state ${where} is unstable${result.oscillatory ? " (oscillatory: a Hopf bifurcation has been crossed)" : ""}, so the linear noise approximation does not apply.`, loading: false };
  }
  // The LNA is in molecules: CV has no unit; Fano = variance/mean scales as 1/Ω in model units.
  const scale = summary.units === "model" ? (summary.omega ?? 1) : 1;
  const fano = Object.fromEntries(Object.entries(result.lna.fano).map(([k, v]) => [k, v == null ? null : v / scale]));
  return { lna: { ...result.lna, fano }, note: `LNA at the deterministic steady state ${where}.`, loading: false };
}

/** One number with its 95% interval under it (nothing under it when the summary has no interval). */
function ValueWithInterval({ m, stat, value, testId }: { m: MomentsJson | undefined; stat: IntervalStat; value: number | null | undefined; testId: string }) {
  const ci = formatInterval(m?.ci, stat);
  return (
    <td className="px-3 py-2 text-right">
      {formatNumber(value)}
      {ci && <span className="block text-xs text-ink-soft" data-testid={testId}>{ci}</span>}
    </td>
  );
}

/** Where the burn-in came from, in words (older summaries have no rule). */
function burnInWhy(summary: SummaryJson, timeUnit: string): string {
  const r = summary.burn_in_rule;
  if (!r) return "";
  const tau = r.relaxation_time != null ? `the circuit's slowest relaxation time is ${formatNumber(r.relaxation_time)} ${timeUnit}` : "the circuit has no stable steady state to relax to";
  if (r.source === "given") return ` Burn-in as given; ${tau}.`;
  if (r.source === "relaxation") return ` Burn-in ${r.relaxation_times} × the slowest relaxation time (${tau.replace("the circuit's slowest relaxation time is ", "")}), at most t_end / 2.`;
  return ` Burn-in t_end / 5; ${tau}.`;
}

/** The caption's sentence on the intervals, naming their method. */
function ciNote(summary: SummaryJson): string {
  const ci = summary.species.map((sp) => summary.stationary[sp]?.ci).find((c) => c);
  return ci ? `Under each number its ${Math.round(ci.level * 100)}% interval (${ci.method}).` : "";
}

/** Stationary mean, SD, CV and Fano factor per species with their 95% intervals, and the LNA CV and Fano beside. */
export function NoiseTable({ summary, lna, amountUnit, timeUnit, burnIn }: {
  summary: SummaryJson; lna: LnaState; amountUnit: string; timeUnit: string; burnIn: number;
}) {
  const isTrace = summary.method === "ode";
  return (
    <section aria-labelledby="noise-h" className="flex flex-col gap-2">
      <h2 id="noise-h" className="text-lg font-semibold">{isTrace ? "Path statistics" : "Noise table"}</h2>
      <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
        <table className="w-full min-w-[36rem] text-sm tabular-nums" data-testid="noise-table">
          <caption className="px-3 pt-2 text-left text-xs text-ink-soft">
            {isTrace
              ? <>Over the deterministic path&apos;s grid values at times ≥ burn-in ({formatNumber(burnIn)} {timeUnit}): SD and CV measure how far the path swings in time (an oscillation), not cell-to-cell noise. The LNA columns predict that noise. </>
              : <>Stationary statistics: pooled over all {summary.runs.toLocaleString("en-US")} cells and grid times ≥ burn-in ({formatNumber(burnIn)} {timeUnit}). SD with n − 1.{burnInWhy(summary, timeUnit)} {ciNote(summary)} </>}
            {lna.note}
          </caption>
          <TableHead columns={["Species", { label: `Mean (${amountUnit})`, numeric: true }, { label: `SD (${amountUnit})`, numeric: true }, { label: "CV", numeric: true }, { label: `Fano (${amountUnit})`, numeric: true }, { label: "LNA CV", numeric: true }, { label: "LNA Fano", numeric: true }]} />
          <tbody>
            {summary.species.map((sp) => {
              const st = summary.stationary[sp];
              return (
                <tr key={sp} className="border-t border-ink/10">
                  <th scope="row" className="px-3 py-2 text-left font-medium">{sp}<WarningMark warnings={warningsAbout(summary.warnings, sp)} /></th>
                  <ValueWithInterval m={st} stat="mean" value={st?.mean} testId={`ci-mean-${sp}`} />
                  <ValueWithInterval m={st} stat="sd" value={sdOf(st?.variance)} testId={`ci-sd-${sp}`} />
                  <ValueWithInterval m={st} stat="cv" value={st?.cv} testId={`ci-cv-${sp}`} />
                  <ValueWithInterval m={st} stat="fano" value={st?.fano} testId={`ci-fano-${sp}`} />
                  <td className="px-3 py-2 text-right text-ink-soft">{lna.loading ? "…" : formatNumber(lna.lna?.cv[sp])}</td>
                  <td className="px-3 py-2 text-right text-ink-soft">{lna.loading ? "…" : formatNumber(lna.lna?.fano[sp])}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </section>
  );
}
