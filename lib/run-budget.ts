/**
 * The bound on queued work (issue 11, item 8): every run is charged its expected cost in
 * cell-events, cells × (expected reaction events per cell + grid points) (lib/view/run-cost.ts), and
 * the unfinished share of a lab's runs, and of a user's runs across all labs, must stay within a
 * budget. Sign-up and labs are free, so the user bound is what stops one person multiplying labs.
 * The sums are read under per-lab and per-user locks inside the inserting transaction
 * (lib/data/runs.ts), so concurrent launches cannot both slip under.
 */
import type { QueuedWork } from "@/lib/data/runs";
import { runEngineTask } from "@/lib/engine";
import { env } from "@/lib/env";
import { HttpError, tooMany, unprocessable } from "@/lib/http";
import { costPerCell, countGridPoints, formatCellEvents } from "@/lib/view/run-cost";
import type { Circuit } from "@/ssa/types";

export interface RunBudget {
  /** Cell-events a lab may have queued or running. */
  lab: number;
  /** Cell-events a user may have queued or running, over all labs. */
  user: number;
  /** Runs a lab, and a user, may have queued or running. */
  maxRuns: number;
}


/** The budget from the settings (lib/env.ts). */
export const getRunBudget = (): RunBudget => ({ lab: env.RUN_BUDGET_LAB, user: env.RUN_BUDGET_USER, maxRuns: env.RUN_QUEUE_MAX_RUNS });

/**
 * Circuits larger than this (species × reactions) are estimated from their initial state rather
 * than by integrating the mean field, and the integration stops after MAX_ODE_STEPS. The estimate
 * runs on the engine pool (lib/engine.ts) within ENGINE_BUDGET_S: a stiff circuit at these bounds
 * (200 species × 1,000 reactions, t_end 10,000) integrates for about 25 s on an idle core, and
 * compiling 20,000 reactions alone takes about 3 s; one past the budget is estimated from its
 * initial state instead.
 */
const MAX_ODE_SIZE = 200_000;
const MAX_ODE_STEPS = 20_000;
/** Estimates kept per process: versions never change, so an entry never goes stale. */
const CACHE_SIZE = 2000;
const eventsCache = new Map<string, number>();
const eventsInFlight = new Map<string, Promise<number>>();

export interface WorkInput {
  method: "ode" | "ssa" | "tau";
  /** Model time units. */
  tEnd: number;
  dt: number;
  cells: number;
  overrides?: Record<string, number>;
}

/** Expected events of one cell on the pool: the mean-field path, or past the budget the initial state. */
async function computeEventsPerCell(circuit: Circuit, tEnd: number, overrides: Record<string, number> | undefined): Promise<number> {
  const tooLarge = (why: string) => `version_id: estimating the cost of a run ${why}; the circuit is too large to run on this server`;
  const run = (initialOnly: boolean) => runEngineTask({ kind: "run-cost", circuit, input: { tEnd, overrides, maxOdeSize: MAX_ODE_SIZE, maxOdeSteps: MAX_ODE_STEPS, initialOnly } }, env.ENGINE_BUDGET_S, tooLarge);
  let outcome;
  try {
    outcome = await run(false);
  } catch (e) {
    if (!(e instanceof HttpError && e.status === 422)) throw e;
    outcome = await run(true);
  }
  if (!outcome.ok) {
    // compileModel's refusal of an override (checked before, normally): the same 422 as before.
    if (outcome.name === "ModelInputError") throw unprocessable(outcome.message);
    throw new Error(`run cost: ${outcome.name}: ${outcome.message}`);
  }
  // JSON has no Infinity: a cost that is not finite comes back as null.
  const events = (JSON.parse(outcome.json) as { eventsPerCell: number | null }).eventsPerCell;
  return events ?? Number.POSITIVE_INFINITY;
}

/**
 * Expected cost of one run of version `versionId` (its stored `circuit`), in cell-events.
 * The events per cell are computed on the engine pool and cached per version, method, t_end and overrides.
 * @throws 422 when an override breaks the circuit (checked before, normally) or the circuit is too
 *   large to estimate; 503 when the engine is busy.
 */
export async function estimateRunWork(versionId: string, circuit: Circuit, w: WorkInput): Promise<{ cost: number; perCell: number }> {
  const overrides = w.overrides && Object.keys(w.overrides).length ? w.overrides : undefined;
  const key = JSON.stringify([versionId, w.method === "ode" ? "ode" : "events", w.tEnd, overrides ? Object.entries(overrides).sort() : null]);
  let events = eventsCache.get(key);
  if (events === undefined && w.method === "ode") events = 0; // a trace fires no reaction events
  if (events === undefined) {
    let pending = eventsInFlight.get(key);
    if (!pending) {
      pending = computeEventsPerCell(circuit, w.tEnd, overrides).finally(() => eventsInFlight.delete(key));
      eventsInFlight.set(key, pending);
    }
    events = await pending;
    if (eventsCache.size >= CACHE_SIZE) eventsCache.delete(eventsCache.keys().next().value as string);
    eventsCache.set(key, events);
  }
  const perCell = costPerCell(events, countGridPoints(w.tEnd, w.dt));
  return { cost: perCell * w.cells, perCell };
}

const ce = (n: number) => `${formatCellEvents(n)} cell-events`;

/**
 * Refuses work that could never fit, whatever else is queued: a 422 naming `fields.tEnd` when
 * one cell alone is over the budget (nothing but a shorter run helps), else `fields.cells`.
 * @throws HttpError 422.
 */
export function requireFitsBudget(cost: number, perCell: number, budget: RunBudget, fields: { cells: string; tEnd: string }, what = "this run"): void {
  const limit = Math.min(budget.lab, budget.user);
  if (cost <= limit) return;
  const field = perCell > limit ? fields.tEnd : fields.cells;
  throw unprocessable(`${field}: ${what} is expected to cost ${ce(cost)} (${ce(perCell)} per cell), more than the budget of ${ce(limit)} a lab or a user may have queued; use fewer cells, a shorter t_end or a larger dt`);
}

/**
 * Refuses `cost` (of `runs` new runs) when the queued work plus it would exceed the lab's or the
 * user's budget, or their run count. Called with the sums read under the locks.
 * @throws HttpError 429 naming what is queued and the budget.
 */
export function requireQueueRoom(queued: QueuedWork, cost: number, runs: number, budget: RunBudget, what = "this run"): void {
  const wait = "wait for runs to finish or make this one smaller";
  if (queued.labCost + cost > budget.lab) {
    throw tooMany(`runs: queued work would exceed the lab's budget of ${ce(budget.lab)} (queued ${ce(queued.labCost)}, ${what} ${ce(cost)}); ${wait}`);
  }
  if (queued.userCost + cost > budget.user) {
    throw tooMany(`runs: queued work would exceed your budget of ${ce(budget.user)} over all your labs (queued ${ce(queued.userCost)}, ${what} ${ce(cost)}); ${wait}`);
  }
  if (queued.labRuns + runs > budget.maxRuns) {
    throw tooMany(`runs: the lab would have more than ${budget.maxRuns} runs queued or running (queued ${queued.labRuns}, ${what} ${runs}; each design of a comparison counts); wait for them or cancel some`);
  }
  if (queued.userRuns + runs > budget.maxRuns) {
    throw tooMany(`runs: you would have more than ${budget.maxRuns} runs queued or running over all your labs (queued ${queued.userRuns}, ${what} ${runs}); wait for them or cancel some`);
  }
}
