"use client";

import { useMemo, useState } from "react";

import { Chart } from "@/app/_components/charts/chart";
import { downloadText } from "@/app/_components/charts/download";
import { fetchJson } from "@/app/_components/run-api";
import { replaySpec } from "@/lib/view/run-charts";
import { cellCsv, exportBaseName, exportFileName } from "@/lib/view/run-export";
import { formatCount, type CellJson, type RunJson } from "@/lib/view/run-view";

/** "Replay cell #i": fetches cell i, replayed alone from (seed, i), plots it and offers it as CSV and JSON. */
export function ReplayCell({ run, units }: { run: RunJson; units: { time: string; amount: string } }) {
  const [index, setIndex] = useState(String(Math.min(3, run.settings.runs - 1)));
  const [cell, setCell] = useState<CellJson | null>(null);
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const max = run.settings.runs - 1;
  const spec = useMemo(() => (cell ? replaySpec(cell, units) : null), [cell, units]);
  const replay = async (e: React.FormEvent) => {
    e.preventDefault();
    const i = Number(index);
    if (!(Number.isInteger(i) && i >= 0 && i <= max)) {
      setError(`index: must be a whole number from 0 to ${max}`);
      return;
    }
    setBusy(true);
    setError(null);
    try {
      setCell(await fetchJson<CellJson>(`/api/runs/${run.id}/cells/${i}`));
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setBusy(false);
    }
  };
  return (
    <section aria-labelledby="replay-h" className="flex flex-col gap-3">
      <h2 id="replay-h" className="text-lg font-semibold">Replay a cell</h2>
      <p className="text-sm text-ink-soft">Any cell of the ensemble is recomputed alone from the run&apos;s seed and its index, and matches the cell that went into the statistics.</p>
      <form onSubmit={replay} className="flex flex-wrap items-end gap-2">
        <div className="flex flex-col gap-1">
          <label htmlFor="replay-index" className="text-sm font-medium">Cell index <span className="font-normal text-ink-soft">(0–{max})</span></label>
          <input id="replay-index" type="number" min={0} max={max} step={1} value={index} onChange={(e) => setIndex(e.target.value)}
            aria-invalid={error ? true : undefined} aria-describedby={error ? "replay-err" : undefined}
            className="w-28 rounded-md border border-ink/25 bg-white px-3 py-2 tabular-nums aria-[invalid]:border-red-600" />
        </div>
        <button type="submit" disabled={busy} className="rounded-md bg-ink px-4 py-2 text-sm font-medium text-white hover:bg-ink/85 disabled:opacity-60">
          {busy ? "Replaying…" : "Replay cell"}
        </button>
      </form>
      {error && <p id="replay-err" role="alert" className="text-sm text-red-700">{error}</p>}
      {cell && (
        <div className="flex flex-col gap-2 rounded-lg border border-ink/10 bg-white p-3" data-testid="replayed-cell">
          <p className="text-sm">
            Cell <strong data-testid="replay-index">#{cell.index}</strong> · seed <strong data-testid="replay-seed">{cell.seed}</strong> · index {cell.index} · {formatCount(cell.events)} events
          </p>
          {spec && <Chart spec={spec} fileBase={exportBaseName(run.id, `cell-${cell.index}`)} label={`Cell ${cell.index} replayed`} />}
          <div className="flex flex-wrap gap-2 text-sm">
            <button type="button" onClick={() => downloadText(exportFileName(run.id, `cell-${cell.index}`, "csv"), cellCsv(cell), "text/csv")}
              className="rounded-md border border-ink/20 bg-white px-3 py-1.5 hover:border-ochre">Download cell CSV</button>
            <button type="button" onClick={() => downloadText(exportFileName(run.id, `cell-${cell.index}`, "json"), JSON.stringify(cell), "application/json")}
              className="rounded-md border border-ink/20 bg-white px-3 py-1.5 hover:border-ochre">Download cell JSON</button>
          </div>
        </div>
      )}
    </section>
  );
}
