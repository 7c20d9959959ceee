/**
 * Worker-thread entry of the engine pool (ssa/node/engine-pool.ts), the only worker-thread pool
 * of Burstwise: the steps of a run (a chunk of cells, the finalize step, a deterministic trace;
 * ssa/node/run-steps.ts) for the command line and the background worker, and the single answers
 * a server gives on request (a version's analysis, its counts table, one replayed cell, the
 * difference test of two designs of a comparison, the expected cost of a run), computed here so
 * that no server's event loop runs them. A request's answer is the JSON text the server sends as
 * is. The modules each kind needs are loaded on its first use, so a thread that only simulates
 * cells starts in a fraction of a second. Node only.
 */
import { gunzipSync } from "node:zlib";

import { Piscina, transferableSymbol, valueSymbol } from "piscina";

import { selectCellJson } from "../cell-selection";
import type { Circuit } from "../types";
import { SLOT_STARTED, type EngineOutcome, type EngineTask } from "./engine-protocol";
import { computeCell, computeChunk, computeClaimedChunks, computeFinalize, computeTrace, decodeChunk, encodeChunk, mergeChunks } from "./run-steps";
import { loadModule } from "./load-module";

/** The counts view as the API shows it (snake_case, NaN as null). */
async function countsJson(circuit: Circuit): Promise<string> {
  const t = (await loadModule(() => import("../model"), () => require("../model") as typeof import("../model"))).countsTable(circuit);
  return JSON.stringify({
    omega: t.omega, omega_unit: t.omegaUnit, volume_fL: t.volumeFL, amount_unit: t.amountUnit, time_unit: t.timeUnit, avogadro: t.avogadro,
    species: t.species,
    constants: t.constants.map((c) => ({
      reaction: c.reaction, law: c.law, name: c.name, value: c.value, unit: c.unit, parameter: c.parameter ?? null,
      molecules: c.molecules, molecules_unit: c.moleculesUnit, note: c.note ?? null,
    })),
  });
}

/** Decodes stored per-cell statistics (gzipped Float64 encoding). */
async function unzipCellStats(gz: Uint8Array) {
  const buf = gunzipSync(gz);
  // Copy into an aligned buffer: the unzipped bytes need not start at a multiple of 8.
  const data = new Float64Array(buf.length / 8);
  new Uint8Array(data.buffer).set(buf);
  return (await loadModule(() => import("../cell-stats"), () => require("../cell-stats") as typeof import("../cell-stats"))).decodeCellStats(data);
}

/** The difference test as numbers (NaN and ±Infinity become null in the JSON text). */
async function differenceJson(task: Extract<EngineTask, { kind: "difference" }>): Promise<string> {
  const a = await unzipCellStats(task.a.cellStatsGz);
  const b = await unzipCellStats(task.b.cellStatsGz);
  const paired = task.options.paired === true && a.cells === b.cells;
  const { compareCv } = await loadModule(() => import("../bootstrap"), () => require("../bootstrap") as typeof import("../bootstrap"));
  return JSON.stringify({ paired, ...compareCv(a, task.a.species, b, task.b.species, { ...task.options, paired }) });
}

/** Computes one task on this thread (the pool's threads, or the caller when it has no pool). */
export async function computeEngineTask(task: EngineTask): Promise<EngineOutcome> {
  try {
    switch (task.kind) {
      case "analysis": {
        const [{ analyze }, { compileModel }] = await Promise.all([loadModule(() => import("../analyze"), () => require("../analyze") as typeof import("../analyze")), loadModule(() => import("../model"), () => require("../model") as typeof import("../model"))]);
        const result = analyze(compileModel(task.circuit));
        return { ok: true, json: JSON.stringify({ ...result, warnings: [...(task.warnings ?? []), ...result.warnings] }) };
      }
      case "counts":
        return { ok: true, json: await countsJson(task.circuit) };
      case "cell":
        return { ok: true, json: selectCellJson(await computeCell(task.circuit, task.options, task.index), task.select, task.warnings) };
      case "difference":
        return { ok: true, json: await differenceJson(task) };
      case "run-cost": {
        const { estimateEventsPerCell } = await loadModule(() => import("../expected-events"), () => require("../expected-events") as typeof import("../expected-events"));
        return { ok: true, json: JSON.stringify(estimateEventsPerCell(task.circuit, task.input)) };
      }
      case "chunk": {
        const partial = await computeChunk(task.circuit, task.options, task.first, task.last);
        return { ok: true, json: "", value: task.encoding === "stored" ? { bytes: encodeChunk(partial), events: partial.events } : partial };
      }
      case "claim-chunks":
        return { ok: true, json: "", value: await computeClaimedChunks(task.circuit, task.options, task.ranges, task.claims) };
      case "finalize": {
        const merged = "merged" in task.chunks ? task.chunks.merged : mergeChunks(task.chunks.stored.map(decodeChunk));
        return { ok: true, json: "", value: await computeFinalize(task.circuit, task.options, merged, task.context) };
      }
      case "trace":
        return { ok: true, json: "", value: await computeTrace(task.circuit, task.options) };
    }
  } catch (e) {
    if (e instanceof Error) return { ok: false, name: e.name, message: e.message };
    throw e;
  }
}

/**
 * Piscina task: flags the start (the pool's time budget counts from here), then computes. A
 * result's typed arrays (a chunk's partial: megabytes of histograms) are moved to the caller, not
 * copied.
 */
export default async function runEngineTask({ task, started }: { task: EngineTask; started: Int32Array }): Promise<EngineOutcome> {
  Atomics.store(started, SLOT_STARTED, 1);
  const outcome = await computeEngineTask(task);
  const buffers = outcome.ok ? ownBuffers(outcome.value, new Set(), 0) : [];
  return buffers.length > 0 ? (Piscina.move({ [transferableSymbol]: buffers, [valueSymbol]: outcome }) as unknown as EngineOutcome) : outcome;
}

/**
 * The buffers of the typed arrays in `value` that own their whole buffer (fresh results; never a
 * view into wasm memory or a shared buffer, which must stay where they are).
 */
function ownBuffers(value: unknown, seen: Set<ArrayBuffer>, depth: number): ArrayBuffer[] {
  if (value === null || typeof value !== "object" || depth > 8) return [];
  if (ArrayBuffer.isView(value)) {
    const b = value.buffer;
    if (b instanceof ArrayBuffer && value.byteOffset === 0 && value.byteLength === b.byteLength && b.byteLength > 0 && !seen.has(b)) {
      seen.add(b);
      return [b];
    }
    return [];
  }
  const out: ArrayBuffer[] = [];
  for (const v of Array.isArray(value) ? value : Object.values(value)) out.push(...ownBuffers(v, seen, depth + 1));
  return out;
}
