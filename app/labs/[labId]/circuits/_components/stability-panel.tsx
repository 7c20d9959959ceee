"use client";

import useSWR from "swr";

import { Caution } from "@/app/_components/caution";
import { Chart } from "@/app/_components/charts/chart";
import { TableHead } from "@/app/_components/table-head";
import { WarningList } from "@/app/_components/warning-list";

import { eigenSpec } from "./eigen-spec";
import { fetchJson, type AnalysisJson } from "./fetch-json";
import { formatNumber, showAmount } from "./format";

export interface StabilityPanelProps {
  versionId: string;
  /** Names the chart downloads, e.g. "ring-timer-v2". */
  fileBase: string;
  timeUnit: string;
  amountUnit: string;
  /** Molecules per amount unit (1 for molecules), to show the steady state in molecules too. */
  omega: number;
}

/** Round-off scale for "is this real part zero" (same rule as the engine's classifier: 1e-9·max(1, |λ|)). */
const tolerance = (ls: { re: number; im: number }[]) => 1e-9 * Math.max(1, ...ls.map((l) => Math.hypot(l.re, l.im)));

/** The verdict in words, from the analysis flags and the eigenvalues. */
function verdict(a: AnalysisJson): { title: string; text: string; tone: "good" | "warn" } {
  if (a.stable) return { title: "Stable", text: "Every eigenvalue has a negative real part: the circuit returns to its steady state after a small push.", tone: "good" };
  if (a.oscillatory) {
    return {
      title: "Oscillatory",
      text: "A complex pair of eigenvalues has positive real part: expect sustained oscillations (Hopf).",
      tone: "warn",
    };
  }
  const tol = tolerance(a.eigenvalues);
  if (a.eigenvalues.some((l) => l.re > tol)) {
    return { title: "Unstable", text: "A real eigenvalue is positive: the circuit leaves this steady state without turning.", tone: "warn" };
  }
  return { title: "Marginal", text: "An eigenvalue sits on the imaginary axis: linear analysis cannot decide; run a trace.", tone: "warn" };
}

/** Steady state, eigenvalues (table and complex plane), the verdict, and the LNA's CV and Fano per species. */
export function StabilityPanel({ versionId, fileBase, timeUnit, amountUnit, omega }: StabilityPanelProps) {
  const { data, error } = useSWR<AnalysisJson>(`/api/versions/${versionId}/analysis`, fetchJson, { shouldRetryOnError: false });
  if (error) {
    return (
      <div className="flex flex-col gap-3">
        <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">
          No steady state could be analysed: {error.message}
        </p>
        <p className="text-sm text-ink-soft">A species that grows without bound, or a circuit that never settles, has no steady state to linearise around. A trace or an ensemble still runs.</p>
      </div>
    );
  }
  if (!data) return <StabilitySkeleton />;
  const v = verdict(data);
  const amount = showAmount(amountUnit);
  const species = Object.keys(data.steady_state);
  const tol = tolerance(data.eigenvalues);
  return (
    <div className="flex flex-col gap-5">
      <section
        aria-labelledby="verdict-h" data-testid="verdict"
        className={`rounded-lg border p-4 ${v.tone === "good" ? "border-moss/30 bg-moss-light" : "border-ochre/40 bg-ochre-light/60"}`}
      >
        <h2 id="verdict-h" className="text-lg font-semibold">{v.title}</h2>
        <p className="mt-1 text-sm">{v.text}</p>
      </section>
      <StabilityHelp timeUnit={timeUnit} />
      <WarningList warnings={data.warnings} title="Warnings on this analysis" testId="analysis-warnings" />

      <div className="grid gap-5 lg:grid-cols-2">
        <section aria-labelledby="ss-h" className="flex min-w-0 flex-col gap-2">
          <h2 id="ss-h" className="font-semibold">Steady state</h2>
          <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
            <table className="w-full text-sm">
              <caption className="sr-only">Deterministic steady state</caption>
              <thead className="bg-paper text-left text-ink-soft">
                <tr>
                  <th scope="col" className="px-3 py-2 font-medium">Species</th>
                  <th scope="col" className="px-3 py-2 text-right font-medium">{amount}</th>
                  {amountUnit !== "molecules" && <th scope="col" className="px-3 py-2 text-right font-medium">molecules</th>}
                </tr>
              </thead>
              <tbody>
                {species.map((id) => (
                  <tr key={id} className="border-t border-ink/10">
                    <th scope="row" className="px-3 py-2 text-left font-medium">{id}</th>
                    <td className="px-3 py-2 text-right tabular-nums">{formatNumber(data.steady_state[id])}</td>
                    {amountUnit !== "molecules" && <td className="px-3 py-2 text-right tabular-nums">{formatNumber(data.steady_state[id] * omega)}</td>}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>

          <h2 className="mt-3 font-semibold" id="eig-h">Eigenvalues</h2>
          <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
            <table className="w-full text-sm" aria-labelledby="eig-h">
              <TableHead columns={["#", { label: `Re λ (1/${timeUnit})`, numeric: true }, { label: `Im λ (1/${timeUnit})`, numeric: true }, "Reading"]} />
              <tbody>
                {data.eigenvalues.map((l, i) => (
                  <tr key={i} className="border-t border-ink/10">
                    <td className="px-3 py-2 text-ink-soft">{i + 1}</td>
                    <td className="px-3 py-2 text-right tabular-nums">{formatNumber(l.re)}</td>
                    <td className="px-3 py-2 text-right tabular-nums">{formatNumber(l.im)}</td>
                    <td className="px-3 py-2 text-xs text-ink-soft">
                      {Math.abs(l.im) > tol
                        ? `${l.re > tol ? "grows" : l.re < -tol ? "decays" : "neutral"}, turning; period ≈ ${formatNumber((2 * Math.PI) / Math.abs(l.im), 3)} ${timeUnit}`
                        : Math.abs(l.re) <= tol ? "zero" : l.re > 0 ? "grows" : `decays in ≈ ${formatNumber(1 / -l.re, 3)} ${timeUnit}`}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>

        <section aria-label="Eigenvalues in the complex plane" className="flex min-w-0 flex-col gap-2">
          <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white p-3" data-testid="eigen-chart">
            <Chart spec={eigenSpec(data.eigenvalues, timeUnit)} fileBase={`${fileBase}-eigenvalues`} label="Eigenvalues of the Jacobian in the complex plane" />
          </div>
        </section>
      </div>

      <section aria-labelledby="lna-h" className="flex flex-col gap-2">
        <h2 id="lna-h" className="font-semibold">Predicted noise (linear noise approximation)</h2>
        {data.lna === null ? (
          <p className="rounded-md border border-ink/10 bg-white px-3 py-2 text-sm" data-testid="lna-none">
            No LNA here: it linearises the noise around a <em>stable</em> steady state, and this one is {v.title.toLowerCase()}. For CV and
            Fano factor of a circuit that {data.oscillatory ? "oscillates" : "leaves its steady state"}, run an ensemble and read its noise table.
          </p>
        ) : (
          <>
            <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
              <table className="w-full min-w-[480px] text-sm">
                <caption className="sr-only">LNA CV and Fano factor per species</caption>
                <TableHead columns={["Species", { label: "Mean (molecules)", numeric: true }, { label: "CV", numeric: true }, { label: "Fano factor", numeric: true }]} />
                <tbody>
                  {species.map((id) => (
                    <tr key={id} className="border-t border-ink/10">
                      <th scope="row" className="px-3 py-2 text-left font-medium">{id}</th>
                      <td className="px-3 py-2 text-right tabular-nums">{formatNumber(data.steady_state[id] * omega)}</td>
                      <td className="px-3 py-2 text-right tabular-nums">{formatNumber(data.lna!.cv[id] ?? null, 3)}</td>
                      <td className="px-3 py-2 text-right tabular-nums">{formatNumber(data.lna!.fano[id] ?? null, 3)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
            {species.some((id) => data.lna!.cv[id] === null) && <p className="text-xs text-ink-soft">— where the steady-state mean is zero: CV and Fano are undefined.</p>}
          </>
        )}
      </section>
      <Caution />
    </div>
  );
}

/** How to read the panel, folded: the explanations live here once instead of beside every figure. */
function StabilityHelp({ timeUnit }: { timeUnit: string }) {
  return (
    <details className="rounded-lg border border-ink/10 bg-white px-4 py-2 text-sm" data-testid="stability-help">
      <summary className="cursor-pointer font-medium">How to read this</summary>
      <ul className="mt-2 list-disc space-y-1 pl-5 text-ink-soft">
        <li>The eigenvalues λ are those of the Jacobian at the deterministic steady state. The steady state is stable when every point lies left of the dashed imaginary axis of the chart.</li>
        <li>A real λ &lt; 0 decays in about 1/|λ| {timeUnit}; a complex pair turns with period 2π/|Im λ|. A pair with positive real part means sustained oscillations (a Hopf bifurcation): cells circle the unstable steady state. A positive real λ pushes the circuit to another state, as in a switch. A zero λ is a conserved total, or a marginal case.</li>
        <li>The linear noise approximation gives CV = SD/mean and Fano factor = variance/mean per species, in molecules, from the covariance at a stable steady state (Fano 1 is Poisson; van Kampen 1992). It does not apply to an oscillating circuit: run an ensemble instead.</li>
      </ul>
    </details>
  );
}

export function StabilitySkeleton() {
  return (
    <div className="flex flex-col gap-4" aria-busy="true" aria-label="Loading the stability analysis">
      <div className="h-20 animate-pulse rounded-lg bg-ink/5" />
      <div className="grid gap-4 lg:grid-cols-2">
        <div className="h-64 animate-pulse rounded-lg bg-ink/5" />
        <div className="h-64 animate-pulse rounded-lg bg-ink/5" />
      </div>
    </div>
  );
}
