import { spawn, type ChildProcess } from "node:child_process";

import { afterEach, describe, expect, it } from "vitest";

import { superviseChild, type Supervised } from "../../scripts/lib/supervise.mjs";

// Real child processes (plain `node -e`), as `npm start` supervises the web app and the worker.
const node = (code: string): ChildProcess => spawn(process.execPath, ["-e", code], { stdio: "ignore" });
const alive = (pid: number | undefined) => {
  try {
    process.kill(pid as number, 0);
    return true;
  } catch {
    return false;
  }
};
const stopOne = (c: ChildProcess) =>
  new Promise<void>((resolve) => {
    if (c.exitCode !== null || c.signalCode !== null) return resolve();
    c.once("exit", () => resolve());
    c.kill("SIGKILL");
  });
const until = async (what: string, ok: () => boolean, timeoutMs = 15_000) => {
  const end = Date.now() + timeoutMs;
  while (!ok()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
};

const running: Supervised[] = [];
afterEach(async () => {
  await Promise.all(running.splice(0).map((s) => s.stop(stopOne)));
});

describe("the start supervisor (scripts/lib/supervise.mjs)", () => {
  it("restarts a killed web child while the worker beside it keeps running", async () => {
    const logs: string[] = [];
    const web = superviseChild({ name: "web app", log: (m) => logs.push(m), baseDelayMs: 50, start: () => node("setInterval(() => {}, 1000)") });
    const worker = superviseChild({ name: "worker", log: (m) => logs.push(m), baseDelayMs: 50, start: () => node("setInterval(() => {}, 1000)") });
    running.push(web, worker);
    const firstWeb = web.child.pid;
    const workerPid = worker.child.pid;
    // As the kernel's OOM or V8's heap limit would end it: a signal, no clean-up.
    web.child.kill("SIGKILL");
    await until("the web app to come back", () => web.starts === 2 && alive(web.child.pid));
    expect(web.child.pid).not.toBe(firstWeb);
    expect(alive(firstWeb)).toBe(false);
    expect(worker.starts).toBe(1);
    expect(worker.child.pid).toBe(workerPid);
    expect(alive(workerPid)).toBe(true);
    expect(logs).toEqual(["web app exited (SIGKILL); restarting in 0.05 s"]);
  });

  it("waits longer after each exit in a row (50, 100, 200 ms …) and gives up nothing", async () => {
    const logs: string[] = [];
    const starts: number[] = [];
    const crashing = superviseChild({
      name: "web app", log: (m) => logs.push(m), baseDelayMs: 50, maxDelayMs: 200,
      start: () => {
        starts.push(Date.now());
        return node("process.exit(3)");
      },
    });
    running.push(crashing);
    await until("five starts", () => crashing.starts >= 5);
    expect(logs.slice(0, 4)).toEqual([
      "web app exited (3); restarting in 0.05 s",
      "web app exited (3); restarting in 0.1 s",
      "web app exited (3); restarting in 0.2 s",
      "web app exited (3); restarting in 0.2 s",
    ]);
    // The gaps between starts include each delay (plus the time a node process takes to start and exit).
    const gaps = starts.slice(1).map((t, i) => t - (starts[i] as number));
    expect(gaps[0]).toBeGreaterThanOrEqual(50);
    expect(gaps[2]).toBeGreaterThanOrEqual(200);
  });

  it("does not restart what it was told to stop, and cancels a pending restart", async () => {
    const logs: string[] = [];
    const web = superviseChild({ name: "web app", log: (m) => logs.push(m), baseDelayMs: 300, start: () => node("setInterval(() => {}, 1000)") });
    const pid = web.child.pid;
    web.child.kill("SIGKILL");
    await until("the exit to be seen", () => logs.length === 1);
    await web.stop(stopOne);
    await new Promise((r) => setTimeout(r, 500));
    expect(web.starts).toBe(1);
    expect(alive(pid)).toBe(false);
  });
});
