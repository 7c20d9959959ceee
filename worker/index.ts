// The background worker: pg-boss queues on the app's Postgres. Started by `npm start`
// (restarted there when it dies) and by `npm run worker` for extra capacity.
import { closeDb } from "../db/client";
import { env } from "../lib/env";
import { createBoss, Queues } from "../lib/jobs";

const boss = createBoss();
await boss.start();
for (const q of Object.values(Queues)) await boss.createQueue(q);
console.log(`worker ready (pid ${process.pid}, concurrency ${env.WORKER_CONCURRENCY})`);

let stopping = false;
async function shutdown(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`worker: ${signal}, finishing the job in hand`);
  await boss.stop({ graceful: true, timeout: 15_000 });
  await closeDb();
  process.exit(0);
}
process.on("SIGTERM", () => void shutdown("SIGTERM"));
process.on("SIGINT", () => void shutdown("SIGINT"));
