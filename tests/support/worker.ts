import { spawn, spawnSync, type ChildProcess } from "node:child_process";

import { testEnv } from "./env";

/** Starts a real worker process on the test database (as `npm run worker` would). */
export function startWorker(extraEnv: Record<string, string> = {}): ChildProcess & { output: string[] } {
  const child = spawn(process.execPath, ["--import", "tsx", "worker/index.ts"], {
    env: {
      ...process.env, DATABASE_URL: testEnv().databaseUrl, NODE_ENV: "production",
      WORKER_HEARTBEAT_S: "10", WORKER_SUPERVISE_S: "2", WORKER_CONCURRENCY: "2", ...extraEnv,
    },
    stdio: ["ignore", "pipe", "pipe"],
  }) as ChildProcess & { output: string[] };
  child.output = [];
  child.stdout!.on("data", (d) => child.output.push(String(d)));
  child.stderr!.on("data", (d) => child.output.push(String(d)));
  return child;
}

export async function waitForOutput(child: { output: string[] }, pattern: RegExp, timeoutMs = 30_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    if (pattern.test(child.output.join(""))) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`worker did not print ${pattern} within ${timeoutMs} ms:\n${child.output.join("")}`);
}

export function stopWorker(child: ChildProcess, signal: NodeJS.Signals = "SIGTERM"): Promise<void> {
  return new Promise((resolve) => {
    if (child.exitCode !== null || child.signalCode !== null) return resolve();
    child.once("exit", () => resolve());
    child.kill(signal);
  });
}

/** Runs the command line as a user would (`npm run --silent cli -- …`), returning parsed JSON. */
export function runCli(args: string[]): { status: number; stdout: string; stderr: string; json: any } {
  const r = spawnSync(process.execPath, ["scripts/cli.mjs", ...args], { encoding: "utf8", maxBuffer: 512 * 1024 * 1024 });
  let json: any = null;
  try { json = JSON.parse(r.stdout); } catch { /* not JSON */ }
  return { status: r.status ?? 1, stdout: r.stdout, stderr: r.stderr, json };
}

/** Worker processes a test file starts; `killAll` in afterEach leaves none behind. */
export function workerPool() {
  const live: ReturnType<typeof startWorker>[] = [];
  return {
    /** Starts a worker and waits until it takes jobs. */
    async start(env: Record<string, string> = {}) {
      const w = startWorker(env);
      live.push(w);
      await waitForOutput(w, /worker ready/);
      return w;
    },
    killAll: () => Promise.all(live.splice(0).map((w) => stopWorker(w, "SIGKILL"))),
  };
}

export const isFinished = (run: { status: string }) => ["succeeded", "failed", "cancelled"].includes(run.status);

/** Polls GET /api/runs/:id until `done(run)`; the last state is in the error when it never comes. */
export async function waitForRun(client: { request(method: string, path: string): Promise<{ json: any }> }, runId: string,
  done: (run: any) => boolean = isFinished, timeoutMs = 90_000): Promise<any> {
  const until = Date.now() + timeoutMs;
  let last: any;
  while (Date.now() < until) {
    last = (await client.request("GET", `/api/runs/${runId}`)).json;
    if (done(last)) return last;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`run ${runId} stuck: ${JSON.stringify(last)}`);
}
