/**
 * Ensembles of cells in chunks: `simulateCells` turns cells [first, last) into a serializable
 * Partial (ssa/stats.ts), which a thread pool or a background worker can produce anywhere and merge
 * in any order; `simulateEnsemble` does a whole run on the calling thread; `trajectory` replays one
 * cell alone. Cell k always uses the stream of (seed, k) (ssa/rng.ts), so a cell's path, and hence
 * every statistic, is independent of chunking and threads. Pure: no I/O, no clock.
 */
import { makeGrid } from "./grid";
import { canGenerateKernel, compileDirectKernel, directKernelGeneric, type DirectKernel } from "./kernel";
import { timeDependenceRefusal, type BlockKernelFn, type Model } from "./model-core";
import { ACF_MAX_CELLS, acfRange, addCellLagSums, countAcfCell, makeAcfSums } from "./oscillation";
import { cellRngState } from "./rng";
import { HistogramAccumulator } from "./histogram-accumulator";
import { PARTIAL_FORMAT, cellPeriods, cellSampleSums, finalizeSummary, mergeCellPartsAll, withHistograms, type CellsPart, type Partial, type SimulateSummary } from "./stats";
import { computeFinalIntervals, computeStationaryIntervals } from "./intervals";
import { BURN_IN_RELAXATION_TIMES, cellHalfSums, checkDrift, driftWarnings, type BurnInChoice } from "./stationarity";
import { MAX_TAU_EPSILON, TAU_EPSILON, tauKernel } from "./tau";
import { scheduleReport, type FiredChange, type FiringRecord } from "./schedule";
import { scheduledDirectKernel, type ScheduledKernelFn } from "./schedule-kernel";
import { compileTauKernel } from "./tau-kernel";
import { ModelInputError } from "./types";
import { canCompileWasmKernel, compileWasmKernel } from "./wasm-kernel";
import { makeWarning, type EngineWarning } from "./warnings";

export type StochasticMethod = "ssa" | "tau";

/** Kernel choices of EnsembleOptions.kernel. */
export const ENGINE_KERNELS = ["wasm", "generated", "generic"] as const;
export type EngineKernel = (typeof ENGINE_KERNELS)[number];

export interface EnsembleOptions {
  method: StochasticMethod;
  /** End time and grid step, in the model's time unit. */
  tEnd: number;
  dt: number;
  seed: number;
  /** Time before which stationary statistics and periods ignore samples; default tEnd/5. */
  burnIn?: number;
  /** Events allowed per cell before the run is stopped as runaway; default 2e9. */
  maxEventsPerCell?: number;
  /**
   * Direct method: "wasm" (default when canCompileWasmKernel, ssa/wasm-kernel.ts), "generated"
   * (JS source per circuit) or "generic"; all give the same samples. Tau-leaping: "generic" or
   * the generated kernel (for "wasm" too).
   */
  kernel?: EngineKernel;
  /** ε of the tau-leaping step selection (ssa/tau.ts); default TAU_EPSILON. Ignored by ssa. */
  tauEpsilon?: number;
  /** Minimum width of a cell's hysteresis band, in molecules, for its periods to count; default 2. */
  minPeriodBand?: number;
  /**
   * Cells sampled into one block before it is added to the histograms (memory ∝ block · grid
   * points · species); default 32, which keeps a 1,000-point, 3-species block within a core's cache.
   */
  blockSize?: number;
}

const DEFAULT_MAX_EVENTS = 2e9;

export { makeGrid };

/** Burn-in actually used: the option, else tEnd/5 (CONTRACT.md §2). */
export function burnInOf(o: { tEnd: number; burnIn?: number }): number {
  return o.burnIn ?? o.tEnd / 5;
}

function withSentinel(grid: Float64Array): Float64Array {
  const s = new Float64Array(grid.length + 1);
  s.set(grid);
  s[grid.length] = Infinity;
  return s;
}

/** The kernel for a model and method, compiled once per model object. */
export function kernelFor(m: Model, o: Pick<EnsembleOptions, "method" | "kernel" | "tauEpsilon">): BlockKernelFn {
  const refusal = timeDependenceRefusal(m);
  if (refusal) throw new ModelInputError(refusal);
  if (m.schedule) {
    // A schedule runs on the scheduled direct kernel (ssa/schedule-kernel.ts) or the generic
    // tau-leaping kernel, which both walk it with ssa/schedule-runtime.ts; the others never see one.
    if (o.method === "tau") {
      const epsilon = o.tauEpsilon ?? TAU_EPSILON;
      const cached = m.kernels.tau;
      if (cached && cached.epsilon === epsilon && cached.generic) return cached.fn;
      const fn = tauKernel(m, { epsilon });
      m.kernels.tau = { epsilon, generic: true, fn };
      return fn;
    }
    return (m.kernels.scheduled ??= scheduledDirectKernel(m));
  }
  if (o.method === "tau") {
    const epsilon = o.tauEpsilon ?? TAU_EPSILON;
    const generic = o.kernel === "generic" || !canGenerateKernel(m);
    const cached = m.kernels.tau;
    if (cached && cached.epsilon === epsilon && cached.generic === generic) return cached.fn;
    const fn = generic ? tauKernel(m, { epsilon }) : compileTauKernel(m, { epsilon });
    m.kernels.tau = { epsilon, generic, fn };
    return fn;
  }
  if (o.kernel === "generic" || !canGenerateKernel(m)) return (m.kernels.generic ??= directKernelGeneric(m));
  if (o.kernel !== "generated") {
    if (m.kernels.wasm === undefined) m.kernels.wasm = canCompileWasmKernel(m) ? wasmOrNull(m) : null;
    if (m.kernels.wasm) return m.kernels.wasm;
  }
  return (m.kernels.direct ??= compileDirectKernel(m));
}

/** The wasm kernel, or null when the host refuses the module (e.g. a browser's limit on synchronous compilation): the JS kernel then runs, with the same samples. */
function wasmOrNull(m: Model): DirectKernel | null {
  try {
    return compileWasmKernel(m);
  } catch {
    return null;
  }
}

function checkOptions(m: Model, o: EnsembleOptions): void {
  if (o.method !== "ssa" && o.method !== "tau") throw new RangeError(`method must be "ssa" or "tau", got ${String(o.method)}`);
  if (!Number.isSafeInteger(o.seed) || o.seed < 0) throw new RangeError(`seed must be a non-negative integer, got ${o.seed}`);
  if (o.burnIn !== undefined && !(o.burnIn >= 0)) throw new RangeError(`burnIn must be >= 0, got ${o.burnIn}`);
  if (o.tauEpsilon !== undefined && !(o.tauEpsilon > 0 && o.tauEpsilon <= MAX_TAU_EPSILON)) {
    throw new RangeError(`tauEpsilon must be in (0, ${MAX_TAU_EPSILON}], got ${o.tauEpsilon}`);
  }
  if (m.nSpecies < 1) throw new RangeError("model has no species");
}

/**
 * Simulates cells [first, last) and returns their exact partial statistics.
 * @throws RangeError for bad options; ModelInputError when a cell exceeds maxEventsPerCell.
 */
export function simulateCells(m: Model, o: EnsembleOptions, first: number, last: number): Partial {
  const folder = new CellsFolder(m, o);
  folder.add(first, last);
  return folder.result() as Partial;
}

/**
 * Folds chunks of cells of one run, in any order, into one Partial: every chunk's samples go into
 * one histogram accumulator (no per-chunk histograms to merge), the per-cell parts are joined at
 * the end. result() equals mergePartials over simulateCells of the same chunks.
 */
export class CellsFolder {
  private readonly acc: HistogramAccumulator;
  private parts: CellsPart[] = [];

  constructor(
    private readonly m: Model,
    private readonly o: EnsembleOptions,
  ) {
    checkOptions(m, o);
    this.acc = new HistogramAccumulator(makeGrid(o.tEnd, o.dt).length * m.nSpecies);
  }

  /** Cells folded so far. */
  get cells(): number {
    return this.parts.reduce((n, p) => n + p.cells, 0);
  }

  /**
   * Simulates cells [first, last) into the fold.
   * @throws RangeError for a bad range; ModelInputError when a cell exceeds maxEventsPerCell.
   */
  add(first: number, last: number): void {
    this.parts.push(simulateCellsInto(this.m, this.o, first, last, this.acc));
  }

  /** The partial of every chunk added, or null when none was. */
  result(): Partial | null {
    if (this.parts.length === 0) return null;
    return withHistograms(mergeCellPartsAll(this.parts), this.acc.toCSR());
  }
}

/** Cells [first, last): their samples added to `acc`, everything else of their partial returned. */
function simulateCellsInto(m: Model, o: EnsembleOptions, first: number, last: number, acc: HistogramAccumulator): CellsPart {
  if (!(Number.isSafeInteger(first) && Number.isSafeInteger(last) && 0 <= first && first < last)) {
    throw new RangeError(`cell range must satisfy 0 <= first < last, got [${first}, ${last})`);
  }
  const grid = makeGrid(o.tEnd, o.dt);
  const gridS = withSentinel(grid);
  const nT = grid.length;
  const nS = m.nSpecies;
  const nPoints = nT * nS;
  const B = Math.max(1, Math.min(o.blockSize ?? 32, last - first));
  const kernel = kernelFor(m, o);
  const maxEvents = o.maxEventsPerCell ?? DEFAULT_MAX_EVENTS;
  const burnIn = burnInOf(o);
  let gStart = 0;
  while (gStart < nT - 1 && grid[gStart] < burnIn) gStart++;
  const minBand = o.minPeriodBand ?? 2;

  // The sample block is reused across calls on the same model (simulateCells is synchronous).
  const need = nPoints * B;
  // A wasm kernel lends a block in its own memory, which it writes without a copy.
  const out = kernel.block?.(need, gridS.length) ?? (m.scratch.block && m.scratch.block.length >= need ? m.scratch.block : (m.scratch.block = new Float64Array(need)));
  const scratch = new Float64Array(nT);
  const x = new Float64Array(nS);
  const periods: number[][] = Array.from({ length: nS }, () => []);
  const amplitudes: number[][] = Array.from({ length: nS }, () => []);
  const cellPtr: number[][] = Array.from({ length: nS }, () => [0]);
  // Per species, each cell's Σx and Σx² after burn-in, in cell order (the bootstrap over cells).
  const sums = Array.from({ length: nS }, () => new Float64Array(last - first));
  const sumSqs = Array.from({ length: nS }, () => new Float64Array(last - first));
  const heads = Array.from({ length: nS }, () => new Float64Array(last - first));
  const tails = Array.from({ length: nS }, () => new Float64Array(last - first));
  const pair = new Float64Array(2);
  // Exact lag sums over cells for the oscillation verdict (ssa/oscillation.ts).
  const acf = makeAcfSums(nS, acfRange(grid, gStart));
  const acfScratch = new Float64Array(Math.max(1, acf.end - acf.start));
  let events = 0;
  // What the schedule did in each cell (ssa/schedule-runtime.ts), read after each cell's run.
  const runtime = m.schedule ? (kernel as ScheduledKernelFn).runtime : null;
  const nE = m.schedule?.entries.length ?? 0;
  const firstAt = runtime ? new Float64Array((last - first) * nE) : null;
  const fireCount = runtime ? new Float64Array((last - first) * nE) : null;

  for (let start = first; start < last; start += B) {
    const nb = Math.min(B, last - start);
    for (let b = 0; b < nb; b++) {
      const cell = start + b;
      x.set(m.initialCounts);
      const ev = kernel(x, cellRngState(o.seed, cell), gridS, nT, out, b, B, maxEvents);
      if (ev < 0) {
        throw new ModelInputError(`cell ${cell} exceeded ${maxEvents} events; the circuit may grow without bound`);
      }
      events += ev;
      if (runtime) {
        (firstAt as Float64Array).set(runtime.firstAt, (cell - first) * nE);
        (fireCount as Float64Array).set(runtime.count, (cell - first) * nE);
      }
      for (let i = 0; i < nS; i++) {
        cellPeriods(out, i * B + b, nS * B, grid, gStart, nT, minBand, scratch, periods[i], amplitudes[i]);
        cellPtr[i].push(periods[i].length);
        cellSampleSums(out, i * B + b, nS * B, gStart, nT, pair);
        sums[i][cell - first] = pair[0];
        sumSqs[i][cell - first] = pair[1];
        if (cell < ACF_MAX_CELLS) addCellLagSums(acf, i, out, i * B + b, nS * B, acfScratch);
        cellHalfSums(out, i * B + b, nS * B, gStart, nT, pair);
        heads[i][cell - first] = pair[0];
        tails[i][cell - first] = pair[1];
      }
      if (cell < ACF_MAX_CELLS) countAcfCell(acf);
    }
    acc.addBlock(out, B, nb);
  }
  return {
    format: PARTIAL_FORMAT,
    nSpecies: nS,
    nTimes: nT,
    cells: last - first,
    events,
    segments: [
      {
        first,
        last,
        species: periods.map((ps, i) => ({
          cellPtr: Float64Array.from(cellPtr[i]),
          periods: Float64Array.from(ps),
          amplitudes: Float64Array.from(amplitudes[i]),
          sum: sums[i],
          sumSq: sumSqs[i],
          sumHead: heads[i],
          sumTail: tails[i],
        })),
        ...(firstAt && fireCount ? { schedule: { firstAt, count: fireCount } } : {}),
      },
    ],
    cellSamples: nT - gStart,
    acf,
  };
}

/** Splits [0, runs) into chunks of at most `size` cells, in order. */
export function chunkRanges(runs: number, size: number): [number, number][] {
  const out: [number, number][] = [];
  for (let s = 0; s < runs; s += size) out.push([s, Math.min(runs, s + size)]);
  return out;
}

export interface SummaryContext {
  units?: "molecules" | "model";
  wallS?: number;
  /** How the burn-in was chosen (ssa/stationarity.ts chooseBurnIn): its rule and warnings join the summary. */
  burnIn?: BurnInChoice;
}

/**
 * The simulate JSON from a merged partial of a run (see finalizeSummary), with 95% intervals over
 * cells beside the stationary and final moments (ssa/intervals.ts) and the stationarity warnings.
 */
export function summarize(m: Model, o: EnsembleOptions, partial: Partial, ctx: SummaryContext = {}): SimulateSummary {
  const summary = finalizeSummaryOf(m, o, partial, ctx);
  const scale = summary.units === "model" ? m.omega : 1;
  const stationaryCi = computeStationaryIntervals(partial, { seed: o.seed, scale });
  const finalCi = computeFinalIntervals(partial, { seed: o.seed, scale });
  m.species.forEach((id, i) => {
    const { period, ...moments } = stationaryCi[i];
    summary.stationary[id].ci = moments;
    summary.final[id].ci = finalCi[i];
    // A period's interval only where a period is reported (oscillating, not withheld by the grid guard).
    const p = summary.period[id];
    if (p.oscillating && p.count > 0 && p.withheld === undefined) p.ci = period;
  });
  const choice = ctx.burnIn;
  if (choice) summary.burn_in_rule = { source: choice.source, relaxation_time: choice.relaxationTime, relaxation_times: BURN_IN_RELAXATION_TIMES };
  summary.warnings.push(...(choice?.warnings ?? []), ...windowWarnings(partial, summary.burn_in, m.timeUnit));
  summary.warnings.push(...driftWarnings(m.species, checkDrift(partial, scale), summary.burn_in, m.timeUnit, choice?.relaxationTime ?? null));
  if (m.schedule) {
    const { fired, warnings } = scheduleReport(m, { tEnd: o.tEnd, burnIn: summary.burn_in, cells: partial.cells, method: o.method }, firingRecord(m, partial));
    summary.schedule = fired;
    summary.warnings.push(...warnings);
  }
  return summary;
}

/** The per-cell schedule records of a merged partial, in cell order; undefined when a segment lacks them (a partial stored before they were kept). */
function firingRecord(m: Model, partial: Partial): FiringRecord | undefined {
  if (!m.schedule || !partial.segments.every((sg) => sg.schedule)) return undefined;
  const parts = partial.segments.map((sg) => sg.schedule as NonNullable<typeof sg.schedule>);
  const join = (pick: (r: (typeof parts)[number]) => Float64Array) => {
    const out = new Float64Array(parts.reduce((n, r) => n + pick(r).length, 0));
    let at = 0;
    for (const r of parts) {
      out.set(pick(r), at);
      at += pick(r).length;
    }
    return out;
  };
  return { cells: partial.cells, firstAt: join((r) => r.firstAt), count: join((r) => r.count) };
}

/** `window-too-short` (field burn_in) when the window after burn-in has fewer than 4 grid points: no drift check is possible. */
function windowWarnings(partial: Partial, burnIn: number, timeUnit: string): EngineWarning[] {
  if (partial.cellSamples === undefined || partial.cellSamples >= 4) return [];
  return [makeWarning("window-too-short", `burn_in: only ${partial.cellSamples} grid point(s) lie at or after burn-in ${burnIn} ${timeUnit}; stationary statistics need a longer window (lower burn_in or raise t_end) and cannot be checked for drift.`, "burn_in")];
}

function finalizeSummaryOf(m: Model, o: EnsembleOptions, partial: Partial, ctx: SummaryContext): SimulateSummary {
  return finalizeSummary(partial, {
    method: o.method,
    seed: o.seed,
    units: ctx.units ?? "molecules",
    species: m.species,
    times: makeGrid(o.tEnd, o.dt),
    burnIn: burnInOf(o),
    omega: m.omega,
    timeUnit: m.timeUnit,
    amountUnit: m.amountUnit,
    wallS: ctx.wallS ?? 0,
    tauEpsilon: o.method === "tau" ? (o.tauEpsilon ?? TAU_EPSILON) : undefined,
  });
}

/**
 * A whole ensemble on the calling thread, folded chunk by chunk.
 * @throws RangeError for bad options.
 */
export function simulateEnsemble(m: Model, o: EnsembleOptions, runs: number, ctx: SummaryContext & { chunk?: number } = {}): SimulateSummary {
  if (!(Number.isSafeInteger(runs) && runs >= 1)) throw new RangeError(`runs must be a positive integer, got ${runs}`);
  const folder = new CellsFolder(m, o);
  for (const [a, b] of chunkRanges(runs, ctx.chunk ?? 1000)) folder.add(a, b);
  return summarize(m, o, folder.result() as Partial, ctx);
}

export interface TrajectoryResult {
  seed: number;
  index: number;
  units: "molecules" | "model";
  species: string[];
  times: number[];
  values: Record<string, number[]>;
  events: number;
  method: StochasticMethod;
  time_unit: string;
  amount_unit: string;
  /** Caveats on this path (ssa/warnings.ts); [] when none. */
  warnings: EngineWarning[];
  /** What the circuit's schedule did in this cell (ssa/schedule.ts); absent without a schedule. */
  schedule?: FiredChange[];
}

/**
 * Cell `index` of the ensemble drawn with `seed`, replayed alone (CONTRACT.md `trajectory`).
 * @throws RangeError for a bad index or options; ModelInputError for a runaway cell.
 */
export function trajectory(m: Model, o: EnsembleOptions, index: number, units: "molecules" | "model" = "molecules"): TrajectoryResult {
  checkOptions(m, o);
  if (!(Number.isSafeInteger(index) && index >= 0)) throw new RangeError(`index must be a non-negative integer, got ${index}`);
  const grid = makeGrid(o.tEnd, o.dt);
  const nT = grid.length;
  const nS = m.nSpecies;
  const out = new Float64Array(nT * nS);
  const x = Float64Array.from(m.initialCounts);
  const maxEvents = o.maxEventsPerCell ?? DEFAULT_MAX_EVENTS;
  const events = kernelFor(m, o)(x, cellRngState(o.seed, index), withSentinel(grid), nT, out, 0, 1, maxEvents);
  if (events < 0) throw new ModelInputError(`cell ${index} exceeded ${maxEvents} events; the circuit may grow without bound`);
  const runtime = m.schedule ? (kernelFor(m, o) as ScheduledKernelFn).runtime : null;
  const schedule = runtime ? scheduleReport(m, { tEnd: o.tEnd, burnIn: burnInOf(o), method: o.method }, { cells: 1, firstAt: runtime.firstAt.slice(), count: runtime.count.slice() }) : null;
  const scale = units === "model" ? m.omega : 1;
  const values: Record<string, number[]> = {};
  m.species.forEach((id, i) => {
    const v: number[] = new Array(nT);
    for (let g = 0; g < nT; g++) v[g] = out[g * nS + i] / scale;
    values[id] = v;
  });
  return {
    seed: o.seed,
    index,
    units,
    species: m.species,
    times: Array.from(grid),
    values,
    events,
    method: o.method,
    time_unit: m.timeUnit,
    amount_unit: units === "model" ? m.amountUnit : "molecules",
    warnings: schedule?.warnings.filter((w) => w.code !== "schedule-after-burn-in") ?? [],
    ...(schedule ? { schedule: schedule.fired } : {}),
  };
}
