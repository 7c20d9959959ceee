/**
 * The web app's engine work: every analysis, counts table and cell replay a request asks for runs
 * on the worker threads of one EnginePool (ssa/node/engine-pool.ts), never on the thread that
 * serves requests, within a time budget, behind a bounded queue. A version's analysis and counts
 * are computed once and stored (versions never change): later requests, from any web process,
 * get the stored answer, marked `x-burstwise-cache: hit`.
 */
import { availableParallelism } from "node:os";
import { join } from "node:path";

import type { VersionRow } from "@/lib/data/circuits";
import { getVersionResult, putVersionResult, type VersionResult, type VersionResultKind } from "@/lib/data/version-results";
import { env } from "@/lib/env";
import { HttpError, unprocessable } from "@/lib/http";
import { EngineBusyError, EngineLimitError, EnginePool } from "@/ssa/node/engine-pool";
import type { EngineOutcome, EngineTask } from "@/ssa/node/engine-protocol";
import { ENGINE_VERSION } from "@/ssa/version";

/** Heap of one engine thread: far above what the circuit limits need, far below the machine. */
const THREAD_HEAP_MB = 1024;
/** How long a refusal for size is kept: it depends on the server's load when it was computed. */
const LIMIT_REFUSAL_TTL_S = 600;

const holder = globalThis as { burstwiseEnginePool?: EnginePool };

/** The process's engine pool, started on first use. */
export function getEnginePool(): EnginePool {
  holder.burstwiseEnginePool ??= new EnginePool({
    // The app is served from the project root (npm start / npm test); the bundler cannot see this file.
    filename: join(process.cwd(), "ssa", "node", "engine-task.ts"),
    threads: env.ENGINE_THREADS ?? Math.max(1, Math.min(2, availableParallelism())),
    maxQueue: env.ENGINE_QUEUE,
    // A task that would wait longer than three budgets would be answered after the client gave up.
    maxWaitMs: 3 * Math.max(env.ENGINE_BUDGET_S, env.CELL_REPLAY_BUDGET_S, env.COMPARISON_TEST_BUDGET_S) * 1000,
    maxHeapMb: THREAD_HEAP_MB,
  });
  return holder.burstwiseEnginePool;
}

/** 503: the engine threads are all busy and the queue is full (or the wait too long). */
const busy = (e: EngineBusyError) => new HttpError(503, `engine: the server is busy (${e.message}); retry in a few seconds`);

/**
 * Runs one task on the pool within `budgetS`.
 * @throws 503 when the pool is busy; 422 with `tooLarge(limit message)` when the task ran out of time or memory.
 */
export async function runEngineTask(task: EngineTask, budgetS: number, tooLarge: (why: string) => string, signal?: AbortSignal): Promise<EngineOutcome> {
  try {
    return await getEnginePool().run(task, budgetS * 1000, signal);
  } catch (e) {
    if (e instanceof EngineBusyError) throw busy(e);
    if (e instanceof EngineLimitError) throw unprocessable(tooLarge(e.message));
    throw e;
  }
}

const WHAT: Record<VersionResultKind, { field: string; verb: string }> = {
  analysis: { field: "analysis", verb: "analyse" },
  counts: { field: "counts", verb: "convert" },
};

/** An engine error the circuit itself causes, as the 422 message the API gives; null for anything else. */
function refusalOf(outcome: Extract<EngineOutcome, { ok: false }>): string | null {
  if (outcome.name === "SteadyStateError") return `circuit: ${outcome.message}`;
  if (outcome.name === "ModelInputError" || outcome.name === "OdeError") return outcome.message;
  return null;
}

const json = (message: string) => JSON.stringify({ error: message });

/** Computes a version's answer on the pool; refusals the circuit causes are answers too (stored). */
async function computeVersionResult(version: VersionRow, kind: VersionResultKind): Promise<VersionResult> {
  const { field, verb } = WHAT[kind];
  let outcome: EngineOutcome;
  try {
    // The analysis carries the version's import warnings first, as `cli analyze` of the SBML file does.
    const task: EngineTask = kind === "analysis" ? { kind, circuit: version.circuit, warnings: version.importWarnings } : { kind, circuit: version.circuit };
    outcome = await runEngineTask(task, env.ENGINE_BUDGET_S,
      (why) => `${field}: ${why}; the circuit is too large to ${verb} on the server`);
  } catch (e) {
    if (e instanceof HttpError && e.status === 422) {
      // Out of time or memory: kept for a while, so that asking again does not cost another budget.
      const result: VersionResult = { status: 422, body: json(e.message) };
      await storeVersionResult(version, kind, result, LIMIT_REFUSAL_TTL_S);
      return result;
    }
    throw e;
  }
  let result: VersionResult;
  if (outcome.ok) result = { status: 200, body: outcome.json };
  else {
    const message = refusalOf(outcome);
    if (message === null) throw new Error(`${kind} of version ${version.id}: ${outcome.name}: ${outcome.message}`);
    result = { status: 422, body: json(message) };
  }
  await storeVersionResult(version, kind, result);
  return result;
}

/** Stores an answer; one that cannot be stored (the version was just deleted) is still given. */
async function storeVersionResult(version: VersionRow, kind: VersionResultKind, result: VersionResult, ttlS?: number): Promise<void> {
  try {
    await putVersionResult(version.id, kind, ENGINE_VERSION, result, ttlS);
  } catch (e) {
    console.error(`[engine] could not store the ${kind} of version ${version.id}`, e);
  }
}

// Requests for the same answer while it is being computed wait for that one computation.
const inFlight = new Map<string, Promise<VersionResult>>();

/**
 * A version's analysis or counts table as a response: the stored answer when there is one,
 * otherwise computed on the pool (once, however many ask at the same time) and stored.
 * @throws 503 when the pool is busy.
 */
export async function respondWithVersionResult(version: VersionRow, kind: VersionResultKind): Promise<Response> {
  const key = `${version.id}:${kind}`;
  let cache: "hit" | "miss" = "hit";
  let result = await getVersionResult(version.id, kind, ENGINE_VERSION);
  if (!result) {
    let pending = inFlight.get(key);
    if (!pending) {
      cache = "miss";
      pending = computeVersionResult(version, kind).finally(() => inFlight.delete(key));
      inFlight.set(key, pending);
    }
    result = await pending;
  }
  return new Response(result.body, { status: result.status, headers: { "content-type": "application/json", "x-burstwise-cache": cache } });
}
