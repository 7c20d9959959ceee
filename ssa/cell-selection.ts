/**
 * One cell's path cut to the species and grid points a request asks for, with the version's
 * import warnings first: the same cut whether the cell was stored at finalize or replayed
 * (lib/cell-replay.ts, ssa/node/engine-task.ts), so both answers are the same JSON. Pure.
 */
import type { TrajectoryResult } from "./ensemble";
import type { EngineWarning } from "./warnings";

export interface CellSelection {
  /** Species to return, in this order (default: all, in the circuit's order). */
  species?: string[];
  /** Return every `every`-th grid point, starting with the first (default 1: all). */
  every?: number;
}

/** The JSON text of `path` cut to `select`, `warnings` put before the path's own. */
export function selectCellJson(path: TrajectoryResult, select: CellSelection = {}, warnings: EngineWarning[] = []): string {
  const cell = warnings.length ? { ...path, warnings: [...warnings, ...path.warnings] } : path;
  const every = select.every ?? 1;
  const species = select.species ?? cell.species;
  if (every === 1 && species === cell.species) return JSON.stringify(cell);
  const thin = (v: number[]) => (every === 1 ? v : v.filter((_, g) => g % every === 0));
  const values: Record<string, number[]> = {};
  for (const id of species) values[id] = thin(cell.values[id]);
  return JSON.stringify({ ...cell, species, times: thin(cell.times), values });
}
