/**
 * The expected cost of a run before it is launched, computed in the browser from the circuit
 * (the server computes the same events on its engine pool, lib/run-budget.ts). The events of one
 * cell come from ssa/expected-events.ts (the total propensity along the mean-field path). Pure: no I/O.
 */
import { RUN_LIMITS } from "@/lib/schemas/runs";
import { estimateEventsPerCell } from "@/ssa/expected-events";
import { makeGrid } from "@/ssa/grid";
import type { Circuit } from "@/ssa/types";

/**
 * Throughput assumed for the time estimate: reaction events per second on one thread. Order of
 * magnitude of the engine's own benchmark on small circuits (`npm run bench`); larger circuits
 * and expression laws run slower.
 */
export const EVENTS_PER_S_PER_THREAD = 1e7;

export interface CostInput {
  method: "ode" | "ssa" | "tau";
  /** Model time units. */
  tEnd: number;
  cells: number;
  overrides?: Record<string, number>;
  /**
   * Largest species × reactions for which the mean-field path is integrated; above it the
   * estimate uses the initial state (the server keeps its own thread free; the browser sets none).
   */
  maxOdeSize?: number;
  /** Most solver steps of that integration (default 200,000); past it, the initial state too. */
  maxOdeSteps?: number;
}

export interface CostEstimate {
  /** Expected reaction events per cell (0 for a trace). */
  eventsPerCell: number;
  totalEvents: number;
  /** Seconds of one thread at EVENTS_PER_S_PER_THREAD. */
  threadSeconds: number;
  /** How eventsPerCell was obtained. */
  basis: "mean-field path" | "initial state" | "trace";
}

/**
 * Expected events and thread time of a run. Integrates the total propensity along the mean-field
 * path by the trapezoidal rule on at most 2000 points; when the ODE cannot be solved it falls back
 * to the propensity at the initial counts × t_end (and says so in `basis`).
 * @throws ModelInputError (from compileModel) when an override is unknown or breaks a bound.
 */
export function estimateRunCost(circuit: Circuit, input: CostInput): CostEstimate {
  if (input.method === "ode") return { eventsPerCell: 0, totalEvents: 0, threadSeconds: 0, basis: "trace" };
  const { eventsPerCell, basis } = estimateEventsPerCell(circuit, input);
  const totalEvents = eventsPerCell * input.cells;
  return { eventsPerCell, totalEvents, threadSeconds: totalEvents / EVENTS_PER_S_PER_THREAD, basis };
}

/** Points of the output grid 0, dt, …, t_end (ssa/grid.ts, the same grid a run records). */
export const countGridPoints = (tEnd: number, dt: number): number => makeGrid(tEnd, dt).length;

/**
 * What one cell of a run may cost the queue, in cell-events: its expected reaction events, at
 * most the engine's per-cell cap (a cell past it fails its run, so no cell costs more), plus one
 * per grid point (recording a sample of every species costs about as much as an event).
 */
export function costPerCell(eventsPerCell: number, gridPoints: number): number {
  const events = Number.isFinite(eventsPerCell) ? Math.min(Math.max(0, eventsPerCell), RUN_LIMITS.maxEventsPerCell) : RUN_LIMITS.maxEventsPerCell;
  return events + gridPoints;
}

/** Cell-events in words: 1.23e9 → "1.23 billion". */
export function formatCellEvents(n: number): string {
  const units: [number, string][] = [[1e12, "trillion"], [1e9, "billion"], [1e6, "million"], [1e3, "thousand"]];
  for (const [size, word] of units) if (n >= size) return `${Number((n / size).toPrecision(3))} ${word}`;
  return String(Math.round(n));
}
