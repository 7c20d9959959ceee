// The background worker: pg-boss queues on the app's Postgres. Started by `npm start`
// (restarted there when it dies) and by `npm run worker` for extra capacity; any number of
// worker processes, on any machines, share the queues through DATABASE_URL.
import { availableParallelism } from "node:os";

import { closeDb } from "../lib/data/pool";
import { env } from "../lib/env";
import { ComparisonFinishJob, createBoss, ensureQueues, Queues } from "../lib/jobs";
import { finishComparison } from "./comparisons";
import { startNotifySweep } from "./notify";
import { createRunPool } from "../ssa/node/run-engine";
import { handleChunk, handleFinalize } from "./runs";

const concurrency = env.WORKER_CONCURRENCY ?? availableParallelism();
// The engine's one pool (ssa/node/engine-pool.ts): chunks and finalize steps run on its threads,
// so this process's event loop only moves jobs and rows.
// One thread starts at once, so the first chunk does not wait for it to load the engine.
const pool = createRunPool(concurrency, { minThreads: 1 });

const boss = createBoss();
await boss.start();
await ensureQueues(boss);

const send = (queue: string, data: object, options: { singletonKey: string }) => boss.send(queue, data, options);

// One pg-boss worker per concurrent chunk, each woken to fetch again as soon as its chunk is done:
// pg-boss otherwise waits out the rest of its 0.5 s poll after a job, and a chunk of 50 ring-timer
// cells takes about 0.13 s, so the threads idled most of the time (a 5-design sweep of 1,000 cells
// each took twice as long as the same five runs on the command line; see README "Comparisons").
for (let i = 0; i < concurrency; i++) {
  let workerId = "";
  workerId = await boss.work(Queues.runChunk, { batchSize: 1, localConcurrency: 1, pollingIntervalSeconds: 0.5, includeMetadata: true },
    async ([job]) => {
      try {
        await handleChunk(job!, { pool, send });
      } finally {
        if (workerId) boss.notifyWorker(workerId);
      }
    });
}
await boss.work(Queues.runFinalize, { batchSize: 1, localConcurrency: 1, pollingIntervalSeconds: 0.5, includeMetadata: true },
  async ([job]) => handleFinalize(job!, { pool }));
// Results a read found missing (the run-finished hook died): computed here, never on the web thread.
await boss.work(Queues.comparisonFinish, { batchSize: 1, localConcurrency: 1, pollingIntervalSeconds: 0.5 },
  async ([job]) => finishComparison(ComparisonFinishJob.parse(job!.data).comparisonId));
const stopSweep = startNotifySweep();
console.log(`worker ready (pid ${process.pid}, ${concurrency} concurrent chunks)`);

let stopping = false;
async function shutdown(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`worker: ${signal}, finishing the chunks in hand`);
  // Graceful: stop fetching, let running chunks finish (or, after the timeout, hand them back).
  stopSweep();
  await boss.stop({ graceful: true, timeout: 30_000 });
  await pool.close();
  await closeDb();
  process.exit(0);
}
process.on("SIGTERM", () => void shutdown("SIGTERM"));
process.on("SIGINT", () => void shutdown("SIGINT"));
