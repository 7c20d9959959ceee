/**
 * The steps of a run as one thread computes them: a chunk of cells, the finalize step (merge,
 * summary, checks, trace, sample cells, per-cell statistics), the deterministic trace, one
 * replayed cell. ssa/node/engine-task.ts runs them on the pool's threads; ssa/node/run-engine.ts
 * runs them on the calling thread when one thread is all there is. Models and burn-ins come from
 * the thread's cache (ssa/node/model-cache.ts), so one thread compiles a circuit once. Nothing
 * here loads the formula parser, the ODE code or the steady-state code unless a step needs them.
 * Node only (zlib, v8).
 */
import { deserialize, serialize } from "node:v8";
import { gunzipSync, gzipSync } from "node:zlib";

import { cellStatsOf, encodeCellStats } from "../cell-stats";
import { ensembleOptionsOf, unitsOf, type EngineOptions } from "../engine-options";
import { CellsFolder, simulateCells, summarize, trajectory, type TrajectoryResult } from "../ensemble";
import { mergePartials, type Partial, type SimulateSummary } from "../stats";
import { timeDependenceRefusal, type Model } from "../model-core";
import { ModelInputError, type Circuit } from "../types";
import { SLOT_NEXT_CHUNK, type FinalizeContext } from "./engine-protocol";
import { getBurnIn, getBurnInValue, getModel } from "./model-cache";
import { loadModule } from "./load-module";

/** What a run's finalize step gives: what the command line prints and the worker stores. */
export interface RunResult {
  summary: SimulateSummary;
  /** Mean-field trace on the run's grid and units; null when not asked for, or when it failed (`traceError`). */
  trace: Record<string, number[]> | null;
  traceError?: string;
  /** The first sample cells, each as `trajectory` gives it. */
  cells: TrajectoryResult[];
  /** Gzipped ssa/cell-stats.ts encoding of the per-cell statistics, when asked for. */
  cellStatsGz: Uint8Array | null;
}

/** A chunk as run_chunks stores it: the partial's bytes and its event count. */
export interface StoredChunk {
  bytes: Uint8Array;
  events: number;
}

/** A chunk's partial as run_chunks stores it: v8-serialized, gzipped at level 1 (fast; ~7 MB per 1,000 ring-timer cells). */
export const encodeChunk = (p: Partial): Uint8Array => gzipSync(serialize(p), { level: 1 });
export const decodeChunk = (bytes: Uint8Array): Partial => deserialize(gunzipSync(bytes)) as Partial;

/** Partials merged in the order given (the merge is exact: any order gives the same bits, ssa/stats.ts). */
export function mergeChunks(partials: Partial[]): Partial {
  if (partials.length === 0) throw new RangeError("no chunks to merge");
  let acc = partials[0]!;
  for (let i = 1; i < partials.length; i++) acc = mergePartials(acc, partials[i]!);
  return acc;
}

/**
 * The model of a stochastic run (ssa, tau), refused before any burn-in or cell work when a rate reads time.
 * @throws ModelInputError naming the reaction whose rate reads `t`.
 */
async function getStochasticModel(circuit: Circuit, o: EngineOptions): Promise<Model> {
  const model = await getModel(circuit, o.overrides);
  const refusal = timeDependenceRefusal(model);
  if (refusal) throw new ModelInputError(refusal);
  return model;
}

/**
 * Cells [first, last) of the run: their exact partial statistics.
 * @throws RangeError / ModelInputError for bad options, a bad circuit or a runaway cell.
 */
export async function computeChunk(circuit: Circuit, o: EngineOptions, first: number, last: number): Promise<Partial> {
  const model = await getStochasticModel(circuit, o);
  // The burn-in is fixed before any cell runs: every chunk sums the same window.
  return simulateCells(model, ensembleOptionsOf(o, await getBurnInValue(model, o)), first, last);
}

/** The next unclaimed chunk of `ranges` (shared by every thread of the run), or null when all are taken. */
export function claimChunk(ranges: [number, number][], claims: Int32Array): [number, number] | null {
  return ranges[Atomics.add(claims, SLOT_NEXT_CHUNK, 1)] ?? null;
}

/** A fold of this run's chunks on this thread (ssa/ensemble.ts CellsFolder), with the model from the thread's cache and the run's burn-in. */
export async function chunkFolder(circuit: Circuit, o: EngineOptions): Promise<CellsFolder> {
  const model = await getStochasticModel(circuit, o);
  return new CellsFolder(model, ensembleOptionsOf(o, await getBurnInValue(model, o)));
}

/** Claims and computes chunks until none are left: their merged partial, or null when it got none. */
export async function computeClaimedChunks(circuit: Circuit, o: EngineOptions, ranges: [number, number][], claims: Int32Array): Promise<Partial | null> {
  const folder = await chunkFolder(circuit, o);
  for (let r = claimChunk(ranges, claims); r; r = claimChunk(ranges, claims)) folder.add(r[0], r[1]);
  return folder.result();
}

/**
 * The finished run from its merged partial: summary (with wall_s = ctx.wallS), the checks against
 * the mean field, and what `ctx` asks for besides.
 */
export async function computeFinalize(circuit: Circuit, o: EngineOptions, merged: Partial, ctx: FinalizeContext): Promise<RunResult> {
  const model = await getStochasticModel(circuit, o);
  const choice = await getBurnIn(model, o);
  const options = ensembleOptionsOf(o, choice.burnIn);
  const units = unitsOf(o);
  const summary = summarize(model, options, merged, { units, wallS: ctx.wallS, burnIn: choice });
  // The grid guard and the quasi-cycle caveat need the mean field (ODE code, loaded here only).
  (await loadModule(() => import("../oscillation-checks"), () => require("../oscillation-checks") as typeof import("../oscillation-checks"))).checkAgainstMeanField(model, summary, { tEnd: o.tEnd, dt: o.dt, burnIn: choice.burnIn });
  let trace: Record<string, number[]> | null = null;
  let traceError: string | undefined;
  if (ctx.trace) {
    try {
      trace = (await loadModule(() => import("../ode"), () => require("../ode") as typeof import("../ode"))).solveOde(model, { tEnd: o.tEnd, dt: o.dt, units }).trace;
    } catch (e) {
      traceError = e instanceof Error ? e.message : String(e);
    }
  }
  const n = Math.min(ctx.sampleCells, o.runs ?? 1);
  const cells = Array.from({ length: n }, (_, i) => trajectory(model, options, i, units));
  let cellStatsGz: Uint8Array | null = null;
  if (ctx.cellStats) {
    const stats = encodeCellStats(cellStatsOf(merged));
    cellStatsGz = gzipSync(Buffer.from(stats.buffer, stats.byteOffset, stats.byteLength), { level: 1 });
  }
  return { summary, trace, ...(traceError !== undefined ? { traceError } : {}), cells, cellStatsGz };
}

/** The deterministic run (method "ode"): its summary, the path as `trace`. @throws OdeError when it cannot be integrated. */
export async function computeTrace(circuit: Circuit, o: EngineOptions): Promise<SimulateSummary> {
  const model = await getModel(circuit, o.overrides);
  const { odeSummary } = await loadModule(() => import("../simulate"), () => require("../simulate") as typeof import("../simulate")); // the ODE code, loaded only for ode runs
  return odeSummary(model, o, 0, await getBurnIn(model, o));
}

/** Cell `index` of the ensemble drawn with `o.seed`, replayed alone. @throws RangeError for method "ode" or a bad index. */
export async function computeCell(circuit: Circuit, o: EngineOptions, index: number): Promise<TrajectoryResult> {
  if (o.method === "ode") throw new RangeError(`method must be "ssa" or "tau" for a trajectory`);
  return trajectory(await getStochasticModel(circuit, o), ensembleOptionsOf(o), index, unitsOf(o));
}
