import { PgBoss } from "pg-boss";
import { z } from "zod";

import { env } from "@/lib/env";

/** Queue names and payloads: the API sends with these schemas and the worker parses with them. */
export const Queues = { runChunk: "run-chunk", runFinalize: "run-finalize", comparisonFinish: "comparison-finish" } as const;

export const RunChunkJob = z.object({ runId: z.string(), chunkIndex: z.number().int().min(0) });
export type RunChunkJob = z.infer<typeof RunChunkJob>;
export const RunFinalizeJob = z.object({ runId: z.string() });
export type RunFinalizeJob = z.infer<typeof RunFinalizeJob>;
/** Compute a comparison's results that the run-finished hook missed (queued by a read, lib/comparisons.ts). */
export const ComparisonFinishJob = z.object({ comparisonId: z.string() });
export type ComparisonFinishJob = z.infer<typeof ComparisonFinishJob>;

/** Retries of a chunk that failed for a transient reason (a crash, a lost connection). */
export const CHUNK_RETRY_LIMIT = 3;

/** Queue settings, created by the worker (and idempotently by the web app before it sends). */
export const QUEUE_OPTIONS = {
  [Queues.runChunk]: {
    retryLimit: CHUNK_RETRY_LIMIT, retryDelay: 1, retryBackoff: true, retryDelayMax: 30,
    // A worker that dies (SIGKILL, power loss) stops its heartbeat; the chunk is retried elsewhere.
    heartbeatSeconds: env.WORKER_HEARTBEAT_S, expireInSeconds: 6 * 3600,
  },
  [Queues.runFinalize]: { retryLimit: CHUNK_RETRY_LIMIT, retryDelay: 1, heartbeatSeconds: env.WORKER_HEARTBEAT_S, expireInSeconds: 3600 },
  // "exclusive": one job per comparison (singletonKey) queued or running at a time, however many reads ask.
  [Queues.comparisonFinish]: { policy: "exclusive", retryLimit: CHUNK_RETRY_LIMIT, retryDelay: 5, heartbeatSeconds: env.WORKER_HEARTBEAT_S, expireInSeconds: 3600 },
} as const;

/** A pg-boss instance on the app's database (schema `pgboss`). */
export function createBoss(opts: { supervise?: boolean } = {}): PgBoss {
  const boss = new PgBoss({
    connectionString: env.DATABASE_URL, schema: "pgboss", max: 4,
    supervise: opts.supervise ?? true, superviseIntervalSeconds: env.WORKER_SUPERVISE_S,
  });
  boss.on("error", (e) => console.error("[pg-boss]", e));
  return boss;
}

export async function ensureQueues(boss: PgBoss): Promise<void> {
  for (const [name, options] of Object.entries(QUEUE_OPTIONS)) {
    if (!(await boss.getQueue(name))) await boss.createQueue(name, options);
    else {
      // A queue's policy is fixed when it is created; pg-boss refuses it in an update, even unchanged.
      const { policy: _policy, ...rest } = options as typeof options & { policy?: string };
      await boss.updateQueue(name, rest);
    }
  }
}

const cache = globalThis as { burstwiseBoss?: Promise<PgBoss> };

/** The web app's sender: one started pg-boss per process, without the supervisor. */
export function getSender(): Promise<PgBoss> {
  cache.burstwiseBoss ??= (async () => {
    const boss = createBoss({ supervise: false });
    // A stopped sender (e.g. closed by a seed script) is replaced on the next send.
    boss.on("stopped", () => delete cache.burstwiseBoss);
    await boss.start();
    await ensureQueues(boss);
    return boss;
  })().catch((e) => {
    delete cache.burstwiseBoss;
    throw e;
  });
  return cache.burstwiseBoss;
}

/** Stops this process's sender, if one was started (scripts that must exit when done). */
export async function closeSender(): Promise<void> {
  const pending = cache.burstwiseBoss;
  delete cache.burstwiseBoss;
  if (pending) await (await pending).stop({ graceful: false, close: true }).catch(() => undefined);
}
