/**
 * Worker-thread entry of the engine service pool (ssa/node/engine-pool.ts): the engine's single
 * answers a server gives on request (a version's analysis, its counts table, one replayed cell,
 * the difference test of two designs of a comparison, the expected cost of a run),
 * computed here so that the server's event loop never runs them. Each returns the JSON text the
 * server sends as is, so the server neither re-encodes nor holds the objects. Node only.
 */
import { gunzipSync } from "node:zlib";

import { analyze } from "../analyze";
import { compareCv } from "../bootstrap";
import { decodeCellStats } from "../cell-stats";
import { estimateEventsPerCell } from "../expected-events";
import { trajectory } from "../ensemble";
import { compileModel, countsTable } from "../model";
import type { Circuit } from "../types";
import { SLOT_STARTED, type EngineOutcome, type EngineTask } from "./engine-protocol";

/** The counts view as the API shows it (snake_case, NaN as null). */
function countsJson(circuit: Circuit): string {
  const t = countsTable(circuit);
  return JSON.stringify({
    omega: t.omega, omega_unit: t.omegaUnit, volume_fL: t.volumeFL, amount_unit: t.amountUnit, time_unit: t.timeUnit, avogadro: t.avogadro,
    species: t.species,
    constants: t.constants.map((c) => ({
      reaction: c.reaction, law: c.law, name: c.name, value: c.value, unit: c.unit, parameter: c.parameter ?? null,
      molecules: c.molecules, molecules_unit: c.moleculesUnit, note: c.note ?? null,
    })),
  });
}

/** One cell replayed alone, then cut down to the selected species and grid points. */
function cellJson(task: Extract<EngineTask, { kind: "cell" }>): string {
  const path = trajectory(compileModel(task.circuit, task.overrides), task.options, task.index, task.units);
  const cell = task.warnings?.length ? { ...path, warnings: [...task.warnings, ...path.warnings] } : path;
  const every = task.select?.every ?? 1;
  const species = task.select?.species ?? cell.species;
  if (every === 1 && species === cell.species) return JSON.stringify(cell);
  const thin = (v: number[]) => (every === 1 ? v : v.filter((_, g) => g % every === 0));
  const values: Record<string, number[]> = {};
  for (const id of species) values[id] = thin(cell.values[id]);
  return JSON.stringify({ ...cell, species, times: thin(cell.times), values });
}

/** Decodes stored per-cell statistics (gzipped Float64 encoding). */
function unzipCellStats(gz: Uint8Array) {
  const buf = gunzipSync(gz);
  // Copy into an aligned buffer: the unzipped bytes need not start at a multiple of 8.
  const data = new Float64Array(buf.length / 8);
  new Uint8Array(data.buffer).set(buf);
  return decodeCellStats(data);
}

/** The difference test as numbers (NaN and ±Infinity become null in the JSON text). */
function differenceJson(task: Extract<EngineTask, { kind: "difference" }>): string {
  const a = unzipCellStats(task.a.cellStatsGz);
  const b = unzipCellStats(task.b.cellStatsGz);
  const paired = task.options.paired === true && a.cells === b.cells;
  return JSON.stringify({ paired, ...compareCv(a, task.a.species, b, task.b.species, { ...task.options, paired }) });
}

/** Piscina task: computes one answer; input errors come back as an outcome, not a thrown error. */
export default function runEngineTask({ task, started }: { task: EngineTask; started: Int32Array }): EngineOutcome {
  Atomics.store(started, SLOT_STARTED, 1);
  try {
    switch (task.kind) {
      case "analysis": {
        const result = analyze(compileModel(task.circuit));
        return { ok: true, json: JSON.stringify({ ...result, warnings: [...(task.warnings ?? []), ...result.warnings] }) };
      }
      case "counts":
        return { ok: true, json: countsJson(task.circuit) };
      case "cell":
        return { ok: true, json: cellJson(task) };
      case "difference":
        return { ok: true, json: differenceJson(task) };
      case "run-cost":
        return { ok: true, json: JSON.stringify(estimateEventsPerCell(task.circuit, task.input)) };
    }
  } catch (e) {
    if (e instanceof Error) return { ok: false, name: e.name, message: e.message };
    throw e;
  }
}
