"use client";

import { TableHead } from "@/app/_components/table-head";
import type { ComparisonJson, IntervalJson } from "@/lib/view/comparison-view";
import { formatNumber } from "@/lib/view/run-view";

/** An estimate over its interval, small: "0.2134" / "0.2101–0.2170". */
function Cell({ iv, lowest }: { iv: IntervalJson | null | undefined; lowest?: boolean }) {
  if (!iv || iv.value == null) return <td className="px-3 py-2 text-right text-ink-soft">—</td>;
  return (
    <td className={`px-3 py-2 text-right ${lowest ? "bg-moss-light/60" : ""}`}>
      <span className="font-medium">{formatNumber(iv.value)}</span>
      {lowest && <span className="sr-only"> (lowest)</span>}
      <span className="block text-xs text-ink-soft">{formatNumber(iv.lo)}–{formatNumber(iv.hi)}</span>
    </td>
  );
}

/**
 * The noise table of one species: per design mean, SD, CV, Fano factor, period mean and period
 * CV with their intervals, and the LNA CV and Fano where the design is stable; the lowest CV
 * and period CV are shaded. The CSV download holds every species.
 */
export function NoiseTable({ c, species }: { c: ComparisonJson; species: string }) {
  const r = c.results!;
  const rows = r.designs.map((d) => ({ d, s: d.species.find((x) => x.species === species) ?? null }));
  const lowest = (key: "cv" | "period_cv") => {
    let best: string | null = null;
    let v = Infinity;
    for (const { d, s } of rows) {
      const x = s?.[key]?.value;
      if (x != null && x < v) { v = x; best = d.design_id; }
    }
    return best;
  };
  const bestCv = lowest("cv");
  const bestPeriod = lowest("period_cv");
  const pct = Math.round(r.level * 100);
  return (
    <section aria-labelledby="noise-h" className="flex flex-col gap-2">
      <div className="flex flex-wrap items-end justify-between gap-2">
        <h2 id="noise-h" className="text-lg font-semibold">Noise table: {species}</h2>
        <a href={`/api/comparisons/${c.id}/csv`} download className="rounded border border-ink/20 bg-white px-2 py-1 text-xs text-ink-soft no-underline hover:border-ochre hover:text-ink">
          CSV<span className="sr-only"> of the noise table</span>
        </a>
      </div>
      <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
        <table className="w-full min-w-[52rem] text-sm tabular-nums" data-testid="comparison-noise-table">
          <caption className="px-3 pt-2 text-left text-xs text-ink-soft">
            Stationary statistics pooled over each design&apos;s cells and grid times after burn-in, in molecules; periods in {r.time_unit || "model time"}.
            Below each estimate its {pct}% percentile-bootstrap interval over cells ({r.replicates} replicates, seed {r.bootstrap_seed}).
            Period columns are empty where {species} does not oscillate; LNA columns where the steady state is not stable.
          </caption>
          <TableHead columns={["Design", { label: "Mean", numeric: true }, { label: "SD", numeric: true }, { label: "CV", numeric: true }, { label: "Fano", numeric: true }, { label: "Period mean", numeric: true }, { label: "Period CV", numeric: true }, { label: "LNA CV", numeric: true }, { label: "LNA Fano", numeric: true }]} />
          <tbody>
            {rows.map(({ d, s }) => (
              <tr key={d.design_id} className="border-t border-ink/10 align-top">
                <th scope="row" className="px-3 py-2 text-left font-medium">
                  {d.label}
                  <span className="block text-xs font-normal text-ink-soft">{d.cells.toLocaleString("en-US")} cells{s?.oscillating ? ` · ${s.period_count.toLocaleString("en-US")} periods` : ""}</span>
                </th>
                <Cell iv={s?.mean} />
                <Cell iv={s?.sd} />
                <Cell iv={s?.cv} lowest={d.design_id === bestCv && rows.length > 1} />
                <Cell iv={s?.fano} />
                <Cell iv={s?.period_mean} />
                <Cell iv={s?.period_cv} lowest={d.design_id === bestPeriod && rows.length > 1} />
                <td className="px-3 py-2 text-right text-ink-soft" title={d.lna.note}>{formatNumber(s?.lna_cv)}</td>
                <td className="px-3 py-2 text-right text-ink-soft" title={d.lna.note}>{formatNumber(s?.lna_fano)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {(() => {
        const without = rows.filter(({ d }) => d.lna.stable !== true);
        if (!without.length) return null;
        const notes = Array.from(new Set(without.map(({ d }) => d.lna.note)));
        const text = without.length === rows.length && notes.length === 1
          ? `No LNA for any design: ${notes[0]}.`
          : `No LNA for ${without.map(({ d }) => `${d.label} (${d.lna.note})`).join("; ")}.`;
        return <p className="text-xs text-ink-soft">{text}</p>;
      })()}
    </section>
  );
}
