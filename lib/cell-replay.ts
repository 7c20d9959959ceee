/**
 * One cell of a finished ensemble for the API: only from runs that succeeded, never more values
 * than one answer may carry. The sample cells the finalize step stored (run_results.cells_gz) are
 * served from storage; any other cell is replayed with the run's own options (its stored events
 * per cell; lib/schemas/run-options.ts engineOptionsOfRun) on the engine pool (lib/engine.ts)
 * within CELL_REPLAY_BUDGET_S. Both are cut by the same function (ssa/cell-selection.ts).
 */
import { getRunCircuit, getRunImportWarnings, getRunSampleCells, type RunRow } from "@/lib/data/runs";
import { runEngineTask } from "@/lib/engine";
import { env } from "@/lib/env";
import { conflict, notFound, unprocessable } from "@/lib/http";
import { engineOptionsOfRun } from "@/lib/schemas/run-options";
import { RUN_LIMITS, type CellQuery } from "@/lib/schemas/runs";
import { selectCellJson, type CellSelection } from "@/ssa/cell-selection";
import type { TrajectoryResult } from "@/ssa/ensemble";
import { ENGINE_VERSION, reproducesCellsOf } from "@/ssa/version";

const fmt = (n: number) => n.toLocaleString("en-US");

/** The events one cell of `run` may fire: what the run stored, or the limit runs had before it was stored. */
export const maxEventsOf = (run: Pick<RunRow, "settings">): number => run.settings.max_events_per_cell ?? RUN_LIMITS.maxEventsPerCell;

/** The smallest `every` that brings `points` × `species` values within `limit`. */
function everyWithin(points: number, species: number, limit: number): number {
  let every = Math.max(1, Math.ceil((points * species) / limit));
  while (Math.ceil(points / every) * species > limit) every++;
  return every;
}

/**
 * Cell `rawIndex` of an ensemble run as the `trajectory` JSON text, cut to `query`.
 * @throws 404 for a cell the run does not have; 409 naming engine_version or status; 422 naming
 *   species/every (too many values, or a bad choice), max_events_per_cell or index (too long); 503 when busy.
 */
export async function replayCell(run: RunRow, rawIndex: string, query: CellQuery, signal?: AbortSignal): Promise<string> {
  if (run.kind !== "ensemble") throw unprocessable("index: a trace has no cells; only ensembles do");
  const index = /^(0|[1-9][0-9]{0,8})$/.test(rawIndex) ? Number(rawIndex) : NaN;
  if (!(index < run.settings.runs)) throw notFound(`cell ${rawIndex} (the run has cells 0 to ${run.settings.runs - 1})`);
  if (!reproducesCellsOf(run.engineVersion, run.method as "ssa" | "tau")) {
    throw conflict(`engine_version: this ${run.method} run was computed by ${run.engineVersion}, and this server's ${ENGINE_VERSION} draws ${run.method} cells differently; launch it again to replay its cells`);
  }
  // Until a run has succeeded its cells are not all known to stay within its limits: a failed
  // run's runaway cell would be recomputed on every request.
  if (run.status !== "succeeded") throw conflict(`status: the run is ${run.status}; cells are replayed only from runs that succeeded`);

  const circuit = await getRunCircuit(run.id);
  const s = run.settings;
  const points = Math.floor(s.t_end / s.dt) + 1; // ssa/grid.ts makeGrid
  const all = circuit.species.map((sp) => sp.id);
  let species: string[] | undefined;
  if (query.species !== undefined) {
    species = query.species.split(",").map((id) => id.trim());
    const known = new Set(all);
    const seen = new Set<string>();
    for (const id of species) {
      if (!known.has(id)) throw unprocessable(`species: unknown species "${id}" (the circuit has ${all.slice(0, 5).join(", ")}${all.length > 5 ? ", …" : ""})`);
      if (seen.has(id)) throw unprocessable(`species: "${id}" is named twice`);
      seen.add(id);
    }
  }
  const every = query.every ?? 1;
  const computed = points * all.length;
  if (computed > RUN_LIMITS.maxReplayComputedValues) {
    throw unprocessable(`index: cell ${index} has ${fmt(computed)} values (${fmt(points)} grid points × ${fmt(all.length)} species), more than the ${fmt(RUN_LIMITS.maxReplayComputedValues)} the server computes for one replay; replay it with the command line (trajectory)`);
  }
  const returned = Math.ceil(points / every) * (species ?? all).length;
  if (returned > RUN_LIMITS.maxReplayValues) {
    const field = query.every !== undefined && query.species === undefined ? "every" : "species";
    throw unprocessable(`${field}: cell ${index} has ${fmt(returned)} values (${fmt(Math.ceil(points / every))} grid points × ${fmt((species ?? all).length)} species), more than the ${fmt(RUN_LIMITS.maxReplayValues)} one replay returns; ask for fewer with species=${all.slice(0, 2).join(",")} or every=${everyWithin(points, (species ?? all).length, RUN_LIMITS.maxReplayValues)}`);
  }

  const maxEvents = maxEventsOf(run);
  const select: CellSelection = { ...(species ? { species } : {}), ...(every !== 1 ? { every } : {}) };
  // The version's import warnings first, as `cli trajectory` of the SBML file prints them.
  const warnings = await getRunImportWarnings(run.id);
  if (index < RUN_LIMITS.sampleCells) {
    const stored = (await getRunSampleCells<TrajectoryResult[]>(run.id))?.[index];
    if (stored && stored.index === index) return selectCellJson(stored, select, warnings);
  }
  const outcome = await runEngineTask(
    { kind: "cell", circuit, options: engineOptionsOfRun(run), index, select, warnings },
    env.CELL_REPLAY_BUDGET_S,
    (why) => `index: replaying cell ${index} ${why}; replay it with the command line (trajectory)`,
    signal,
  );
  if (outcome.ok) return outcome.json;
  if (outcome.name === "ModelInputError" && /^cell \d+ exceeded \d+ events/.test(outcome.message)) {
    throw unprocessable(`max_events_per_cell: cell ${index} exceeded this run's limit of ${maxEvents} events per cell, so it cannot be replayed within it`);
  }
  if (outcome.name === "ModelInputError") throw unprocessable(outcome.message);
  throw new Error(`cell ${index} of run ${run.id}: ${outcome.name}: ${outcome.message}`);
}
