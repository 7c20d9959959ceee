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
  const r = spawnSync(process.execPath, ["--import", "tsx", "cli/index.ts", ...args], { encoding: "utf8", maxBuffer: 512 * 1024 * 1024 });
  let json: any = null;
  try { json = JSON.parse(r.stdout); } catch { /* not JSON */ }
  return { status: r.status ?? 1, stdout: r.stdout, stderr: r.stderr, json };
}
