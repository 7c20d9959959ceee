import { spawn, type ChildProcess } from "node:child_process";
import { createServer } from "node:net";

import { afterAll, describe, expect, it } from "vitest";

import { testEnv } from "../support/env";

// `npm start` for real (scripts/start.mjs) on the test database and a spare port, with the build
// `npm test` made: the web app is killed the way a heap limit or the kernel would end it.
let start: (ChildProcess & { output: string[] }) | undefined;

const freePort = () =>
  new Promise<number>((resolve, reject) => {
    const srv = createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as { port: number };
      srv.close(() => resolve(port));
    });
  });
const alive = (pid: number) => {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
};
async function waitFor<T>(what: string, probe: () => T | undefined | Promise<T | undefined>, timeoutMs: number): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v !== undefined) return v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}:\n${start?.output.join("").slice(-3000)}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}
const healthy = async (port: number) => {
  try {
    return (await fetch(`http://127.0.0.1:${port}/api/health`)).ok ? true : undefined;
  } catch {
    return undefined;
  }
};

afterAll(async () => {
  if (!start || start.exitCode !== null) return;
  const exited = new Promise((r) => start!.once("exit", r));
  start.kill("SIGTERM"); // start.mjs stops its children (web app, worker) itself
  const timer = setTimeout(() => process.kill(-start!.pid!, "SIGKILL"), 30_000);
  await exited;
  clearTimeout(timer);
});

describe("npm start (scripts/start.mjs)", () => {
  it("restarts the web app when it is killed, while the worker keeps running", async () => {
    const port = await freePort();
    // SMTP_URL is set by npm test, so start.mjs starts no mail fake of its own.
    start = spawn(process.execPath, ["scripts/start.mjs"], {
      env: { ...process.env, DATABASE_URL: testEnv().databaseUrl, PORT: String(port), HOST: "127.0.0.1", NEXTAUTH_URL: `http://127.0.0.1:${port}` },
      stdio: ["ignore", "pipe", "pipe"],
      detached: true,
    }) as ChildProcess & { output: string[] };
    start.output = [];
    start.stdout!.on("data", (d) => start!.output.push(String(d)));
    start.stderr!.on("data", (d) => start!.output.push(String(d)));
    const text = () => start!.output.join("");

    const [webPid, workerPid] = await waitFor("npm start to be ready", () => {
      const m = /web app pid (\d+), worker pid (\d+)/.exec(text());
      return m ? [Number(m[1]), Number(m[2])] : undefined;
    }, 120_000);
    expect(await healthy(port)).toBe(true);

    process.kill(webPid as number, "SIGKILL");
    const newWeb = await waitFor("the web app to be restarted", () => {
      const m = /web app restarted \(pid (\d+)\)/.exec(text());
      return m ? Number(m[1]) : undefined;
    }, 30_000);
    await waitFor("the restarted web app to answer", () => healthy(port), 60_000);

    expect(newWeb).not.toBe(webPid);
    expect(alive(workerPid as number)).toBe(true);
    expect(start.exitCode).toBeNull();
    expect(text()).toContain("web app exited (SIGKILL); restarting in 1 s");
    expect(text()).not.toContain("shutting down");
    expect(text()).not.toMatch(/worker exited/);
  }, 240_000); // its waits add up to 210 s on a loaded machine
});
