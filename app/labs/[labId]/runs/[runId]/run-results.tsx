"use client";

import { useMemo, useState } from "react";
import useSWR from "swr";

import { Caution } from "@/app/_components/caution";
import { Chart, ChartSkeleton } from "@/app/_components/charts/chart";
import { downloadText } from "@/app/_components/charts/download";
import { jsonFetcher } from "@/app/_components/run-api";
import { DatasetOverlayPicker, MeasuredNoiseTable, useDatasetValues } from "@/app/_components/dataset-overlay";
import { TableHead } from "@/app/_components/table-head";
import { seriesOverlayLayer, seriesOverlayPoints, snapshotOverlayBins, type DatasetJson, type OverlayTarget } from "@/lib/view/dataset-overlay";
import { bandsSpec, cellsSpec, distributionVersusMeasuredSpec, histogramSpec, traceSpec } from "@/lib/view/run-charts";
import { bandsCsv, exportBaseName, exportFileName, noiseCsv } from "@/lib/view/run-export";
import {
  amountUnitOf, burnInOf, describeScheduleEntry, formatInterval, formatNumber, histogramOf, momentsOf, valuesAfterBurnIn, weightedHistogramOf,
  type CellJson, type RunJson, type SummaryJson,
} from "@/lib/view/run-view";
import { RUN_LIMITS } from "@/lib/schemas/runs";

import { NoiseTable, useLna, type LnaState } from "./noise-table";
import { ReplayCell } from "./replay-cell";

type Units = { time: string; amount: string };

/** Results of a succeeded run: fetched once (a finished run's summary never changes). */
export function RunResults({ run, timeUnit, modelAmountUnit }: { run: RunJson; timeUnit: string; modelAmountUnit: string }) {
  const { data: summary, error } = useSWR<SummaryJson>(`/api/runs/${run.id}/summary`, jsonFetcher, { revalidateOnFocus: false, revalidateIfStale: false });
  if (error) return <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">The results could not be loaded: {error.message}</p>;
  if (!summary) {
    return (
      <div aria-busy="true" aria-label="Loading results" className="flex flex-col gap-4">
        <div className="h-16 animate-pulse rounded bg-ink/5" />
        <ChartSkeleton />
        <div className="h-40 animate-pulse rounded bg-ink/5" />
      </div>
    );
  }
  return <LoadedResults run={run} summary={summary} timeUnit={timeUnit} modelAmountUnit={modelAmountUnit} />;
}

function LoadedResults({ run, summary, timeUnit, modelAmountUnit }: { run: RunJson; summary: SummaryJson; timeUnit: string; modelAmountUnit: string }) {
  const time = summary.time_unit ?? timeUnit;
  const amount = amountUnitOf(summary.units, summary.amount_unit ?? modelAmountUnit);
  const units: Units = useMemo(() => ({ time, amount }), [time, amount]);
  const [species, setSpecies] = useState(summary.species[0]);
  const lna = useLna(run, summary);
  const burnIn = summary.burn_in ?? burnInOf(run.settings);
  const isEnsemble = run.kind === "ensemble";
  const [datasetId, setDatasetId] = useState<string | null>(null);
  const { data: dataset, error: datasetError } = useDatasetValues(datasetId);
  const target: OverlayTarget = { timeUnit: time as OverlayTarget["timeUnit"], amount: summary.units, omega: summary.omega };
  const measured = dataset && dataset.id === datasetId ? dataset : null;
  return (
    <div className="flex flex-col gap-8">
      <Caution />
      {isEnsemble ? (
        <>
          <div className="flex flex-wrap items-center gap-x-6 gap-y-2">
            {summary.species.length > 1 && <SpeciesPicker species={summary.species} value={species} onChange={setSpecies} />}
            <div data-testid="overlay-picker"><DatasetOverlayPicker labId={run.lab_id} value={datasetId} onChange={setDatasetId} /></div>
            {datasetError && <p role="alert" className="text-sm text-red-700">The dataset could not be loaded: {datasetError.message}</p>}
          </div>
          <BandsSection run={run} summary={summary} species={species} units={units} measured={measured?.kind === "series" ? measured : null} target={target} />
          <SampleCells run={run} summary={summary} species={species} units={units} burnIn={burnIn} measured={measured?.kind === "snapshot" ? measured : null} target={target} />
        </>
      ) : (
        <TraceSection run={run} summary={summary} units={units} />
      )}
      <NoiseTable summary={summary} lna={lna} amountUnit={units.amount} timeUnit={units.time} burnIn={burnIn} />
      {measured && (
        <section aria-label="Measured noise" data-testid="measured-noise" className="flex flex-col gap-2">
          <MeasuredNoiseTable dataset={measured} />
          <p className="text-xs text-ink-soft">Measured values × the dataset&apos;s molecules-per-unit factor. Beside the simulated noise table above: the model predicts, the bench measures.</p>
        </section>
      )}
      <PeriodSpread run={run} summary={summary} species={species} onSpecies={setSpecies} units={units} burnIn={burnIn} />
      {isEnsemble && <ReplayCell run={run} units={units} />}
      <Downloads run={run} summary={summary} lna={lna} />
    </div>
  );
}

/** A row of toggle buttons choosing the species the per-species charts show. */
function SpeciesPicker({ species, value, onChange }: { species: string[]; value: string; onChange: (s: string) => void }) {
  return (
    <div role="group" aria-label="Species shown in the charts" className="flex flex-wrap items-center gap-2 text-sm">
      <span className="font-medium">Species</span>
      {species.map((sp) => (
        <button key={sp} type="button" aria-pressed={sp === value} onClick={() => onChange(sp)}
          className={`rounded-full border px-3 py-1 ${sp === value ? "border-ochre bg-ochre-light font-semibold text-ochre-dark" : "border-ink/20 bg-white text-ink-soft hover:border-ochre"}`}>
          {sp}
        </button>
      ))}
    </div>
  );
}

function BandsSection({ run, summary, species, units, measured, target }: { run: RunJson; summary: SummaryJson; species: string; units: Units; measured: DatasetJson | null; target: OverlayTarget }) {
  const spec = useMemo(() => {
    const bands = bandsSpec(summary, species, units) as { layer: unknown[] };
    if (!measured?.values) return bands as ReturnType<typeof bandsSpec>;
    // A series over the bands: its points, converted to the run's time and amount units.
    return { ...bands, layer: [...bands.layer, seriesOverlayLayer(seriesOverlayPoints(measured, target), measured.name)] } as ReturnType<typeof bandsSpec>;
  }, [summary, species, units, measured, target]);
  return (
    <section aria-labelledby="bands-h" className="flex flex-col gap-2">
      <h2 id="bands-h" className="text-lg font-semibold">Bands</h2>
      <p className="text-sm text-ink-soft">
        At each sampling time, the middle 90% and 50% of the cells (5–95% and 25–75%), their median and mean, against the mean-field ODE trace.
        {!summary.trace && " The mean-field trace could not be computed for this run."}
      </p>
      <ScheduleChanges summary={summary} timeUnit={units.time} />
      <div data-testid="bands-chart"><Chart spec={spec} fileBase={exportBaseName(run.id, `bands-${species}`)} label={`Bands of ${species}`} /></div>
    </section>
  );
}

function TraceSection({ run, summary, units }: { run: RunJson; summary: SummaryJson; units: Units }) {
  const spec = useMemo(() => traceSpec(summary, units), [summary, units]);
  return (
    <section aria-labelledby="trace-h" className="flex flex-col gap-2">
      <h2 id="trace-h" className="text-lg font-semibold">Mean-field trace</h2>
      <p className="text-sm text-ink-soft">A trace is deterministic: it has no cells, bands or noise. Launch an ensemble for those.</p>
      <ScheduleChanges summary={summary} timeUnit={units.time} />
      <div data-testid="trace-chart"><Chart spec={spec} fileBase={exportBaseName(run.id, "trace")} label="Mean-field trace" /></div>
    </section>
  );
}

/** The circuit's scheduled changes that fired in this run, as the dotted rules on the charts show them (values in the circuit's units). */
function ScheduleChanges({ summary, timeUnit }: { summary: SummaryJson; timeUnit: string }) {
  if (!summary.schedule?.length) return null;
  return (
    <p data-testid="schedule-changes" className="text-sm text-ink-soft">
      <span className="font-medium text-ink">Scheduled changes</span> (dotted lines; amounts in the circuit&apos;s units):{" "}
      {summary.schedule.map((c) => describeScheduleEntry(c, timeUnit)).join("; ")}
    </p>
  );
}

/** The first few cells of the ensemble (replayed by the API), and their values after burn-in as a histogram. */
function SampleCells({ run, summary, species, units, burnIn, measured, target }: { run: RunJson; summary: SummaryJson; species: string; units: Units; burnIn: number; measured: DatasetJson | null; target: OverlayTarget }) {
  const n = Math.min(RUN_LIMITS.sampleCells, run.settings.runs);
  const { data: cells, error } = useSWR<CellJson[]>(
    `cells:${run.id}:${n}`,
    () => Promise.all(Array.from({ length: n }, (_, i) => jsonFetcher<CellJson>(`/api/runs/${run.id}/cells/${i}`))),
    { revalidateOnFocus: false, revalidateIfStale: false },
  );
  const cellsChart = useMemo(
    () => (cells ? cellsSpec(cells, species, units, { times: summary.times, values: summary.mean[species] ?? [] }) : null),
    [cells, species, units, summary],
  );
  const sample = useMemo(() => (cells ? valuesAfterBurnIn(cells, species, burnIn) : []), [cells, species, burnIn]);
  const sampleMoments = momentsOf(sample);
  const st = summary.stationary[species];
  // Runs stored since the summary carries the pooled tally draw the whole ensemble's distribution;
  // older ones fall back to the sample cells, and say so.
  const exact = summary.stationary_distribution?.[species];
  const histChart = useMemo(() => {
    if (exact && exact.values.length && measured?.values) {
      // A snapshot against the whole ensemble, both as densities in the run's bins.
      const h = weightedHistogramOf(exact.values, exact.counts);
      const column = measured.columns[0]!;
      return distributionVersusMeasuredSpec(h, snapshotOverlayBins(measured, column, target, { edges: h.edges }), {
        title: `${species} after burn-in against ${measured.name}`,
        subtitle: `Simulated: all ${summary.runs.toLocaleString("en-US")} cells at every grid time after burn-in; measured: column ${column}, × ${measured.units.molecules_per_unit} molecules per unit`,
        xTitle: `${species} (${units.amount})`, measuredLabel: `Measured: ${measured.name}`,
      });
    }
    if (exact && exact.values.length) {
      const samples = exact.counts.reduce((a, b) => a + b, 0);
      return histogramSpec(weightedHistogramOf(exact.values, exact.counts), {
        title: `${species} after burn-in, all ${summary.runs.toLocaleString("en-US")} cells`,
        subtitle: `${samples.toLocaleString("en-US")} samples (every cell at every grid time t ≥ ${formatNumber(burnIn)} ${units.time})`,
        xTitle: `${species} (${units.amount})`, what: "Cells × grid times", mean: st?.mean ?? null,
      });
    }
    return sample.length ? histogramSpec(histogramOf(sample), {
      title: `${species} after burn-in, in the ${n} sample cells`,
      subtitle: `${sample.length.toLocaleString("en-US")} grid values at t ≥ ${formatNumber(burnIn)} ${units.time}; a small sample, not the whole ensemble`,
      xTitle: `${species} (${units.amount})`, what: "Sample-cell values", mean: sampleMoments.mean,
    }) : null;
  }, [exact, measured, target, summary.runs, st?.mean, sample, species, n, burnIn, units, sampleMoments.mean]);
  return (
    <>
      <section aria-labelledby="cells-h" className="flex flex-col gap-2">
        <h2 id="cells-h" className="text-lg font-semibold">Sample cells</h2>
        <p className="text-sm text-ink-soft">Cells 0 to {n - 1} of the ensemble, each replayed from (seed {run.seed}, index), with the ensemble mean.</p>
        {error ? <p role="alert" className="text-sm text-red-700">The sample cells could not be loaded: {error.message}</p>
          : cellsChart ? <Chart spec={cellsChart} fileBase={exportBaseName(run.id, `cells-${species}`)} label={`${species} in sample cells`} />
          : <ChartSkeleton />}
      </section>
      <section aria-labelledby="dist-h" className="flex flex-col gap-2">
        <h2 id="dist-h" className="text-lg font-semibold">Distribution after burn-in</h2>
        {exact ? (
          <p className="text-sm text-ink-soft">
            The stationary distribution of the whole ensemble: every cell at every sampling time after burn-in, pooled;
            mean {formatNumber(st?.mean)}, CV {formatNumber(st?.cv)}, Fano {formatNumber(st?.fano)} ({units.amount}).
          </p>
        ) : (
          <p className="text-sm text-ink-soft">
            This run&apos;s stored summary keeps the ensemble&apos;s moments after burn-in, not its per-count histogram, so this histogram pools only the {n} sample cells.
            Compare: sample cells mean {formatNumber(sampleMoments.mean)}, CV {formatNumber(sampleMoments.cv)}; whole ensemble mean {formatNumber(st?.mean)}, CV {formatNumber(st?.cv)} ({units.amount}).
          </p>
        )}
        <div data-testid="distribution-chart">
          {histChart ? <Chart spec={histChart} fileBase={exportBaseName(run.id, `distribution-${species}`)} label={`Distribution of ${species} after burn-in`} />
            : !error && <ChartSkeleton height={240} />}
        </div>
      </section>
    </>
  );
}

/** Period statistics of every species, and the period histogram of the chosen one. */
function PeriodSpread({ run, summary, species, onSpecies, units, burnIn }: {
  run: RunJson; summary: SummaryJson; species: string; onSpecies: (s: string) => void; units: Units; burnIn: number;
}) {
  const oscillating = summary.species.filter((sp) => (summary.period[sp]?.count ?? 0) > 0);
  const shown = oscillating.includes(species) ? species : oscillating[0];
  const p = shown ? summary.period[shown] : undefined;
  const spec = useMemo(() => (p && shown ? histogramSpec(p.histogram, {
    title: `Period spread of ${shown}`,
    subtitle: `${p.count.toLocaleString("en-US")} periods from ${p.cells ?? "—"} cell${p.cells === 1 ? "" : "s"} after burn-in; mean ${formatNumber(p.mean)} ${units.time}, CV ${formatNumber(p.cv)}`,
    xTitle: `Period (${units.time})`, what: "Periods", mean: p.mean,
  }) : null), [p, shown, units.time]);
  return (
    <section aria-labelledby="period-h" className="flex flex-col gap-2" data-testid="period-spread">
      <h2 id="period-h" className="text-lg font-semibold">Period spread</h2>
      <p className="text-sm text-ink-soft">
        Periods are the times between successive upward crossings of a band from the 40th to the 60th percentile of each {run.kind === "trace" ? "path" : "cell"}&apos;s own values after burn-in ({formatNumber(burnIn)} {units.time}).
        {run.kind === "trace"
          ? "A species counts as oscillating when its cycle is sustained: the amplitude does not decay over the last half of the path."
          : "A species counts as oscillating when the cells' averaged autocorrelation dips below zero and rises to a second peak by more than noise alone reaches (4 standard errors, Bartlett's formula)."}
        {" "}No period is reported when the sampling step is too coarse for the rhythm (fewer than 8 samples per period).
        {run.kind !== "trace" && " Under the mean and the CV: their 95% interval over cells (percentile bootstrap over whole cells, 1000 replicates)."}
      </p>
      <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
        <table className="w-full min-w-[36rem] text-sm tabular-nums">
          <caption className="sr-only">Period statistics per species</caption>
          <TableHead columns={["Species", { label: "Periods", numeric: true }, { label: `Mean (${units.time})`, numeric: true }, { label: `SD (${units.time})`, numeric: true }, { label: "CV", numeric: true }, { label: `Amplitude (${units.amount})`, numeric: true }]} />
          <tbody>
            {summary.species.map((sp) => {
              const q = summary.period[sp];
              const has = (q?.count ?? 0) > 0;
              return (
                <tr key={sp} className={`border-t border-ink/10 ${sp === shown ? "bg-ochre-light/40" : ""}`}>
                  <th scope="row" className="px-3 py-2 text-left font-medium">
                    {has ? <button type="button" onClick={() => onSpecies(sp)} className="text-ochre-dark underline-offset-2 hover:underline" aria-pressed={sp === shown}>{sp}</button> : sp}
                  </th>
                  {has ? (
                    <>
                      <td className="px-3 py-2 text-right">{q.count.toLocaleString("en-US")}</td>
                      <td className="px-3 py-2 text-right">
                        {formatNumber(q.mean)}
                        {q.ci && <span className="block text-xs text-ink-soft" data-testid={`period-ci-mean-${sp}`}>{formatInterval(q.ci, "mean")}</span>}
                      </td>
                      <td className="px-3 py-2 text-right">{formatNumber(q.sd)}</td>
                      <td className="px-3 py-2 text-right">
                        {formatNumber(q.cv)}
                        {q.ci && <span className="block text-xs text-ink-soft" data-testid={`period-ci-cv-${sp}`}>{formatInterval(q.ci, "cv")}</span>}
                      </td>
                      <td className="px-3 py-2 text-right">{q.amplitude ? `${formatNumber(q.amplitude.mean)} ± ${formatNumber(q.amplitude.sd)}` : "—"}</td>
                    </>
                  ) : (
                    <td colSpan={5} className="px-3 py-2 text-ink-soft">
                      No regular rhythm{q?.crossings && q.crossings.count > 0 ? ` (${q.crossings.count.toLocaleString("en-US")} crossing intervals with CV ${formatNumber(q.crossings.cv, 2)})` : ""}
                    </td>
                  )}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {spec && shown && <Chart spec={spec} fileBase={exportBaseName(run.id, `periods-${shown}`)} label={`Period spread of ${shown}`} />}
    </section>
  );
}

function Downloads({ run, summary, lna }: { run: RunJson; summary: SummaryJson; lna: LnaState }) {
  const button = "rounded-md border border-ink/20 bg-white px-3 py-1.5 hover:border-ochre";
  return (
    <section aria-labelledby="downloads-h" className="flex flex-col gap-2">
      <h2 id="downloads-h" className="text-lg font-semibold">Downloads</h2>
      <p className="text-sm text-ink-soft">
        Bands CSV: one row per species and sampling time (mean, SD, 5/25/50/75/95% quantiles, mean-field trace). Noise table CSV: stationary, final and period statistics per species{lna.lna ? ", with the LNA" : ""}.
        Summary JSON: everything above as the API returns it. Each chart has its own SVG and PNG buttons.
      </p>
      <div className="flex flex-wrap gap-2 text-sm">
        <button type="button" className={button} onClick={() => downloadText(exportFileName(run.id, "bands", "csv"), bandsCsv(summary), "text/csv")}>Download bands CSV</button>
        <button type="button" className={button} onClick={() => downloadText(exportFileName(run.id, "noise-table", "csv"), noiseCsv(summary, lna.lna), "text/csv")}>Download noise table CSV</button>
        <button type="button" className={button} onClick={() => downloadText(exportFileName(run.id, "summary", "json"), JSON.stringify(summary), "application/json")}>Download summary JSON</button>
      </div>
    </section>
  );
}
