"use client";

import { useMemo, useState } from "react";
import useSWR from "swr";

import { Chart, ChartSkeleton } from "@/app/_components/charts/chart";
import { jsonFetcher } from "@/app/_components/run-api";
import {
  bandsOverlaySpec, comparisonFileBase, intervalSpec, resultSpecies, sweepSpec, type ComparisonBandsJson, type ComparisonJson, type NoiseMeasure,
} from "@/lib/view/comparison-view";

const MEASURES: { value: NoiseMeasure; label: string }[] = [
  { value: "cv", label: "CV" },
  { value: "period_cv", label: "Period CV" },
  { value: "fano", label: "Fano factor" },
];

/** The comparison's charts: estimates with intervals per design, the sweep curves, and the bands overlaid. */
export function ComparisonCharts({ c, species }: { c: ComparisonJson; species: string }) {
  const r = c.results!;
  const all = resultSpecies(r);
  const hasPeriods = r.designs.some((d) => d.species.some((s) => s.period_cv));
  const [measure, setMeasure] = useState<NoiseMeasure>(hasPeriods ? "period_cv" : "cv");
  const interval = useMemo(() => intervalSpec(r, measure, all), [r, measure, all]);
  const sweepCv = useMemo(() => (c.kind === "sweep" ? sweepSpec(c, r, "cv", species) : null), [c, r, species]);
  const sweepPeriod = useMemo(() => (c.kind === "sweep" ? sweepSpec(c, r, "period_cv", species) : null), [c, r, species]);
  const bands = useSWR<ComparisonBandsJson>(`/api/comparisons/${c.id}/bands?species=${encodeURIComponent(species)}&points=300`, jsonFetcher, { revalidateOnFocus: false });
  const bandsSpec = useMemo(() => (bands.data ? bandsOverlaySpec(bands.data) : null), [bands.data]);

  return (
    <section aria-labelledby="charts-h" className="flex flex-col gap-4">
      <div className="flex flex-wrap items-center gap-3">
        <h2 id="charts-h" className="text-lg font-semibold">Charts</h2>
        <label htmlFor="chart-measure" className="text-sm">Measure</label>
        <select id="chart-measure" value={measure} onChange={(e) => setMeasure(e.target.value as NoiseMeasure)} className="rounded-md border border-ink/25 bg-white px-2 py-1 text-sm">
          {MEASURES.map((m) => <option key={m.value} value={m.value}>{m.label}</option>)}
        </select>
      </div>
      <div className="rounded-lg border border-ink/10 bg-white p-3" data-testid="chart-intervals">
        <Chart spec={interval} fileBase={comparisonFileBase(c.id, measure.replace("_", "-"))} label={`${MEASURES.find((m) => m.value === measure)?.label} per design with intervals`} />
      </div>
      {sweepCv && (
        <div className={`grid gap-4 ${sweepPeriod ? "lg:grid-cols-2" : ""}`}>
          <div className="rounded-lg border border-ink/10 bg-white p-3" data-testid="chart-sweep-cv">
            <Chart spec={sweepCv} fileBase={comparisonFileBase(c.id, `${species}-cv-sweep`)} label={`${species} CV across the sweep`} />
          </div>
          {sweepPeriod && (
            <div className="rounded-lg border border-ink/10 bg-white p-3" data-testid="chart-sweep-period">
              <Chart spec={sweepPeriod} fileBase={comparisonFileBase(c.id, `${species}-period-cv-sweep`)} label={`${species} period CV across the sweep`} />
            </div>
          )}
        </div>
      )}
      <div className="rounded-lg border border-ink/10 bg-white p-3" data-testid="chart-bands">
        {bandsSpec ? (
          <Chart spec={bandsSpec} fileBase={comparisonFileBase(c.id, `${species}-bands`)} label={`${species} bands of every design`} />
        ) : bands.error ? (
          <p role="alert" className="text-sm text-red-800">The bands could not be loaded: {bands.error.message}</p>
        ) : (
          <ChartSkeleton height={280} />
        )}
      </div>
    </section>
  );
}
