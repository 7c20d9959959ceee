/**
 * What the engine pool (ssa/node/engine-pool.ts) and its threads (ssa/node/engine-task.ts) pass
 * each other. Apart from both so that a server importing the pool does not load the engine itself.
 */
import type { CompareOptions } from "../bootstrap";
import type { CellSelection } from "../cell-selection";
import type { EngineOptions } from "../engine-options";
import type { ExpectedEventsInput } from "../expected-events";
import type { Partial } from "../stats";
import type { Circuit } from "../types";
import type { EngineWarning } from "../warnings";

/** Slot of the shared started flag: the thread sets it when it begins the task (after loading). */
export const SLOT_STARTED = 0;
/** Slot of a claim-chunks counter: the index of the next chunk to claim. */
export const SLOT_NEXT_CHUNK = 0;

export type { CellSelection };

/** How a chunk's partial statistics come back: as the object, or as run_chunks stores them (run-steps.ts StoredChunk). */
export type ChunkEncoding = "partial" | "stored";

export type EngineTask =
  /** `warnings`: the version's import warnings, put before the analysis's own. */
  | { kind: "analysis"; circuit: Circuit; warnings?: EngineWarning[] }
  | { kind: "counts"; circuit: Circuit }
  | {
      kind: "cell"; circuit: Circuit; options: EngineOptions; index: number; select?: CellSelection;
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
  | { kind: "run-cost"; circuit: Circuit; input: ExpectedEventsInput }
  /** Cells [first, last) of a run (ssa/node/run-engine.ts simulateChunk); `value` is their partial. */
  | { kind: "chunk"; circuit: Circuit; options: EngineOptions; first: number; last: number; encoding: ChunkEncoding }
  /**
   * Chunks of one run claimed one at a time from a counter shared by every thread of the run
   * (`claims[SLOT_NEXT_CHUNK]`, Atomics.add), so no thread waits for another to hand it work;
   * `value` is the merged partial of the chunks this thread claimed, or null when it got none.
   */
  | { kind: "claim-chunks"; circuit: Circuit; options: EngineOptions; ranges: [number, number][]; claims: Int32Array }
  /**
   * The summary, mean-field trace, sample cells and per-cell statistics of a run from its chunks
   * (ssa/node/run-engine.ts finalizeRun): either the stored chunk encodings in chunk order, or the
   * merged partial. `value` is a RunResult.
   */
  | { kind: "finalize"; circuit: Circuit; options: EngineOptions; chunks: { stored: Uint8Array[] } | { merged: Partial }; context: FinalizeContext }
  /** The deterministic run (method "ode"); `value` is its summary. */
  | { kind: "trace"; circuit: Circuit; options: EngineOptions };

/** What a run's finalize step adds besides the summary. */
export interface FinalizeContext {
  /** Wall time of the run so far (s), as the summary reports it. */
  wallS: number;
  /** Sample cells to replay and return (the first ones; at most the run's cells). */
  sampleCells: number;
  /** Whether to add the mean-field trace on the same grid. */
  trace: boolean;
  /** Whether to encode the per-cell statistics (ssa/cell-stats.ts) for the comparisons' bootstrap. */
  cellStats: boolean;
}

/**
 * What a task gives back: the JSON text of the answer (the server sends it as is), or for a run's
 * steps (chunk, finalize, trace) the structured `value` with `json` empty; or the error it threw by
 * class name and message (error classes do not survive the thread boundary).
 */
export type EngineOutcome = { ok: true; json: string; value?: unknown } | { ok: false; name: string; message: string };
