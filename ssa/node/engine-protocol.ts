/**
 * What the engine pool (ssa/node/engine-pool.ts) and its threads (ssa/node/engine-task.ts) pass
 * each other. Apart from both so that a server importing the pool does not load the engine itself.
 */
import type { CompareOptions } from "../bootstrap";
import type { EnsembleOptions } from "../ensemble";
import type { ExpectedEventsInput } from "../expected-events";
import type { Circuit } from "../types";
import type { EngineWarning } from "../warnings";

/** Slot of the shared started flag: the thread sets it when it begins the task (after loading). */
export const SLOT_STARTED = 0;

export interface CellSelection {
  /** Species to return, in this order (default: all, in the circuit's order). */
  species?: string[];
  /** Return every `every`-th grid point, starting with the first (default 1: all). */
  every?: number;
}

export type EngineTask =
  /** `warnings`: the version's import warnings, put before the analysis's own. */
  | { kind: "analysis"; circuit: Circuit; warnings?: EngineWarning[] }
  | { kind: "counts"; circuit: Circuit }
  | {
      kind: "cell"; circuit: Circuit; overrides?: Record<string, number>; options: EnsembleOptions;
      index: number; units: "molecules" | "model"; select?: CellSelection;
      /** The version's import warnings, put before the cell's own. */
      warnings?: EngineWarning[];
    }
  | {
      /**
       * The bootstrap test of B − A in CV of one species (ssa/bootstrap.ts compareCv), from the two
       * runs' per-cell statistics as stored: gzipped ssa/cell-stats.ts encodings, unzipped here too.
       * `options.paired` asks for pairs; they are used only when both runs have as many cells.
       * Answers `{ paired, cv, periodCv }`.
       */
      kind: "difference"; a: { cellStatsGz: Uint8Array; species: number }; b: { cellStatsGz: Uint8Array; species: number };
      options: CompareOptions;
    }
  /** Expected reaction events of one cell of a run (ssa/expected-events.ts); answers `{ eventsPerCell, basis }`. */
  | { kind: "run-cost"; circuit: Circuit; input: ExpectedEventsInput };

/**
 * What a task gives back: the JSON text of the answer, or the error it threw by class name and
 * message (error classes do not survive the thread boundary).
 */
export type EngineOutcome = { ok: true; json: string } | { ok: false; name: string; message: string };
