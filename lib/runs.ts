import { randomInt } from "node:crypto";

import { requireLabRole, type Action } from "@/lib/access";
import type { AuditEventInput } from "@/lib/data/audit";
import { failRun, getRun, insertRun, type QueuedWork, type RunRow } from "@/lib/data/runs";
import { requireVersion } from "@/lib/data/version-access";
import { idParam, notFound, unprocessable } from "@/lib/http";
import { getSender, Queues, type RunChunkJob } from "@/lib/jobs";
import { checkOverrides } from "@/lib/schemas/circuit";
import { estimateRunWork, getRunBudget, requireFitsBudget, requireQueueRoom, type RunBudget } from "@/lib/run-budget";
import { settingsOf, type RunLaunch } from "@/lib/schemas/run-options";
import { RUN_LIMITS } from "@/lib/schemas/runs";
import type { Circuit } from "@/ssa/types";
import { ENGINE_VERSION } from "@/ssa/version";

/** A fresh seed for a run that names none (printed back, so the run can be repeated). */
export const drawSeed = (): number => randomInt(1, 2 ** 31);

/** What a launch was charged, and what it left queued (the API's `cost`), in cell-events. */
export interface LaunchCost { cell_events: number; lab_queued: number; lab_budget: number; user_queued: number; user_budget: number }

/** The `cost` answer of a launch of `cost` that `queued` (before it) let through. */
export function launchCostJson(cost: number, queued: QueuedWork, budget: RunBudget): LaunchCost {
  return { cell_events: cost, lab_queued: queued.labCost + cost, lab_budget: budget.lab, user_queued: queued.userCost + cost, user_budget: budget.user };
}

/**
 * Refuses a stochastic run (ssa, tau) of a circuit whose rate formulas read the time `t`: the
 * circuit is valid (the ODE runs it) but the direct method and tau-leaping need rates of the state
 * only. The formula parser is loaded only when a formula has the word `t` in it.
 * @throws HttpError 422 naming the reaction's field.
 */
export async function requireStochasticRates(circuit: Circuit, method: "ode" | "ssa" | "tau"): Promise<void> {
  if (method === "ode") return;
  if (!circuit.reactions.some((r) => r.rate.law === "expression" && /\bt\b/.test(r.rate.expression))) return;
  const { stochasticRefusal } = await import("@/ssa/model");
  const why = stochasticRefusal(circuit);
  if (why) throw unprocessable(why);
}

/**
 * Queues a run: checks the circuit version, role and overrides, charges its expected cost
 * against the lab's and the user's budget of queued work, stores the run, and sends one job per
 * chunk of cells.
 * @throws 404/403 (version, role), 422 (overrides; a run bigger than the budget itself), 429 (the queue is full).
 */
export async function createRun(userId: string, body: RunLaunch, actor?: { id: string; email: string }): Promise<{ id: string; seed: number; cost: LaunchCost }> {
  const version = await requireVersion(userId, body.version_id, "lab:read");
  await requireLabRole(userId, version.labId, "run:launch", "version");
  checkOverrides(version.circuit, body.overrides);
  await requireStochasticRates(version.circuit, body.method);
  const kind = body.method === "ode" ? "trace" : "ensemble";
  const cells = kind === "trace" ? 1 : (body.runs ?? 1);
  const budget = getRunBudget();
  const { cost, perCell } = await estimateRunWork(version.id, version.circuit, { method: body.method, tEnd: body.t_end, dt: body.dt, cells, overrides: body.overrides });
  requireFitsBudget(cost, perCell, budget, { cells: "runs", tEnd: "t_end" });
  const settings = settingsOf(body);
  const seed = body.seed ?? drawSeed();
  const chunksTotal = Math.ceil(cells / RUN_LIMITS.chunkCells);
  // The run and its run.launched event commit together; the jobs follow (a failure to queue fails the run).
  const seen: { queued?: QueuedWork } = {}; // what the guard saw, for the answer
  const id = await insertRun({
    labId: version.labId, versionId: version.id, kind, method: body.method, settings, seed, chunksTotal,
    engineVersion: ENGINE_VERSION, createdBy: userId, cost,
  }, (queued) => {
    requireQueueRoom(queued, cost, 1, budget);
    seen.queued = queued;
  }, actor ? async (runId, trx) => launchedEvent(actor, (await getRun(runId, trx))!) : undefined);
  const jobs = Array.from({ length: chunksTotal }, (_, chunkIndex) => ({
    data: { runId: id, chunkIndex } satisfies RunChunkJob,
    singletonKey: `${id}:${chunkIndex}`,
  }));
  try {
    await (await getSender()).insert(Queues.runChunk, jobs);
  } catch (e) {
    // Without its jobs the run would wait forever: say so on the run, then fail the request.
    await failRun(id, "queue: the run could not be queued; try again");
    throw e;
  }
  return { id, seed, cost: launchCostJson(cost, seen.queued!, budget) };
}

/** The `run.launched` event of a run, by `actor` (details name the circuit, version, method, cells and seed). */
export function launchedEvent(actor: { id: string; email: string }, row: RunRow, extra: Record<string, unknown> = {}): AuditEventInput {
  return {
    labId: row.labId, actor, action: "run.launched", target: { type: "run", id: row.id },
    details: { circuit: row.circuitName, version_number: row.versionNumber, version_id: row.versionId, method: row.method, runs: row.settings.runs, seed: row.seed, ...extra },
  };
}

/** A run as the API shows it (CONTRACT.md §3 `GET /api/runs/:id`). */
export function runToJson(r: RunRow) {
  return {
    id: r.id, status: r.status, progress: r.status === "succeeded" ? 1 : r.chunksDone / r.chunksTotal,
    ...(r.error ? { error: r.error } : {}),
    seed: r.seed, settings: r.settings, version_id: r.versionId, circuit_id: r.circuitId, circuit_name: r.circuitName,
    version_number: r.versionNumber, lab_id: r.labId, kind: r.kind, method: r.method,
    chunks_done: r.chunksDone, chunks_total: r.chunksTotal, engine_version: r.engineVersion,
    created_by: r.createdByEmail, created_at: r.createdAt, started_at: r.startedAt, finished_at: r.finishedAt,
    wall_s: r.wallS, events: r.events,
    // Caveats on the run's numbers (ssa/warnings.ts): [] until it has a summary, then the summary's.
    warnings: r.warnings ?? [],
  };
}

/**
 * The run named by a URL segment, when the user may do `action` in its lab.
 * @throws 404 for a bad id, a missing run or one in another lab; 403 for the role.
 */
export async function requireRun(userId: string, rawId: string | undefined, action: Action = "lab:read"): Promise<RunRow> {
  const run = await getRun(idParam(rawId, "run"));
  if (!run) throw notFound("run");
  await requireLabRole(userId, run.labId, action, "run");
  return run;
}
