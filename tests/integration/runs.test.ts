import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { isFinished, runCli, stopWorker, waitForRun, workerPool } from "../support/worker";

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
const STATS = ["times", "mean", "sd", "quantiles", "final", "stationary", "period"] as const;

let db: Knex;
let modeler: Client;
let labId: string;
let versionId: string;
const workers = workerPool();
const worker = workers.start;

async function launch(body: Record<string, unknown>, client = modeler) {
  const r = await client.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 200, dt: 1, ...body });
  expect(r.status, r.text).toBe(202);
  return r.json as { id: string; seed: number };
}

const waitFor = (runId: string, done: (run: any) => boolean, timeoutMs = 90_000, client = modeler) => waitForRun(client, runId, done, timeoutMs);
const finished = isFinished;

function pick(summary: any) {
  return Object.fromEntries(STATS.map((k) => [k, summary[k]]));
}

beforeAll(async () => {
  db = testDb();
  modeler = new Client();
  expect(await modeler.signIn("modeler@sentinel.example", "sentinel-demo")).toBe(true);
  labId = (await modeler.request("GET", "/api/labs")).json.labs.find((l: any) => l.name === "Soil Sentinel").id;
  const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...ringTimer, name: `Ring timer runs ${Date.now()}` } });
  expect(c.status, c.text).toBe(201);
  versionId = c.json.version_id;
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db.destroy();
});

describe("ensembles through the API and the worker", () => {
  it("a 200-cell ensemble from the demo modeler equals `cli simulate` with the same seed", async () => {
    await worker();
    const { id, seed } = await launch({ runs: 200, seed: 4242 });
    expect(seed).toBe(4242);
    const run = await waitFor(id, finished);
    expect(run.status).toBe("succeeded");
    expect(run.progress).toBe(1);
    const summary = (await modeler.request("GET", `/api/runs/${id}/summary`)).json;
    const cli = runCli(["simulate", "examples/ring-timer.circuit.json", "--runs", "200", "--seed", "4242", "--t-end", "200", "--dt", "1", "--threads", "1"]);
    expect(cli.status, cli.stderr).toBe(0);
    expect(JSON.stringify(pick(summary))).toBe(JSON.stringify(pick(cli.json)));
    expect(summary.trace.A).toHaveLength(201); // mean-field trace on the same grid
    const chunks = await db("run_chunks").where({ run_id: id }).select("chunk_index");
    expect(chunks.map((c) => c.chunk_index).sort((a, b) => a - b)).toEqual([0, 1, 2, 3]);

    // Cell 7 replayed alone from (seed, 7), and a cell past the end is a 404.
    const cell = await modeler.request("GET", `/api/runs/${id}/cells/7`);
    const cliCell = runCli(["trajectory", "examples/ring-timer.circuit.json", "--seed", "4242", "--index", "7", "--t-end", "200", "--dt", "1"]);
    expect(cell.json.values).toEqual(cliCell.json.values);
    expect((await modeler.request("GET", `/api/runs/${id}/cells/200`)).status).toBe(404);
  });

  it("a worker killed with SIGKILL mid-run is replaced and the run finishes with identical numbers, each chunk once", async () => {
    const first = await worker({ WORKER_CONCURRENCY: "1" });
    const { id } = await launch({ runs: 400, seed: 99, t_end: 1000 });
    await waitFor(id, (r) => r.chunks_done >= 1 && r.status === "running", 60_000);
    await stopWorker(first, "SIGKILL");
    const atKill = (await modeler.request("GET", `/api/runs/${id}`)).json;
    expect(atKill.status).toBe("running");
    await worker();
    const run = await waitFor(id, finished, 120_000);
    expect(run.status).toBe("succeeded");
    const rows = await db("run_chunks").where({ run_id: id }).select("chunk_index");
    expect(rows).toHaveLength(8);
    expect(new Set(rows.map((r) => r.chunk_index)).size).toBe(8);
    const summary = (await modeler.request("GET", `/api/runs/${id}/summary`)).json;
    const cli = runCli(["simulate", "examples/ring-timer.circuit.json", "--runs", "400", "--seed", "99", "--t-end", "1000", "--dt", "1"]);
    expect(JSON.stringify(pick(summary))).toBe(JSON.stringify(pick(cli.json)));
  });

  it("two workers at once share one run and give the same numbers", async () => {
    const [a, b] = [await worker({ WORKER_CONCURRENCY: "1" }), await worker({ WORKER_CONCURRENCY: "1" })];
    // 20 chunks of about 0.1 s: more than a poll interval (0.5 s) of work, so both workers get some.
    const { id } = await launch({ runs: 1000, seed: 7, t_end: 500 });
    const run = await waitFor(id, finished);
    expect(run.status).toBe("succeeded");
    const by = await db("run_chunks").where({ run_id: id }).select("worker");
    expect(new Set(by.map((r) => r.worker)).size).toBe(2);
    expect(a.output.join("") + b.output.join("")).not.toMatch(/Error/);
    const summary = (await modeler.request("GET", `/api/runs/${id}/summary`)).json;
    const cli = runCli(["simulate", "examples/ring-timer.circuit.json", "--runs", "1000", "--seed", "7", "--t-end", "500", "--dt", "1"]);
    expect(JSON.stringify(pick(summary))).toBe(JSON.stringify(pick(cli.json)));
  });

  it("a tau-leaping run stores its ε, equals `cli simulate --method tau --tau-epsilon` and replays a cell with it", async () => {
    await worker();
    const { id } = await launch({ method: "tau", runs: 60, seed: 31, tau_epsilon: 0.1 });
    const run = await waitFor(id, finished);
    expect(run.status).toBe("succeeded");
    expect(run.settings.tau_epsilon).toBe(0.1);
    const summary = (await modeler.request("GET", `/api/runs/${id}/summary`)).json;
    expect(summary.tau_epsilon).toBe(0.1);
    const args = ["examples/ring-timer.circuit.json", "--method", "tau", "--tau-epsilon", "0.1", "--seed", "31", "--t-end", "200", "--dt", "1"];
    const cli = runCli(["simulate", ...args, "--runs", "60"]);
    expect(cli.status, cli.stderr).toBe(0);
    expect(JSON.stringify(pick(summary))).toBe(JSON.stringify(pick(cli.json)));
    const cell = await modeler.request("GET", `/api/runs/${id}/cells/5`);
    expect(cell.json.values).toEqual(runCli(["trajectory", ...args, "--index", "5"]).json.values);
    // Without ε a tau run records the default, so a rerun matches even if the default changes.
    const plain = await launch({ method: "tau", runs: 1, seed: 1, t_end: 10 });
    expect((await modeler.request("GET", `/api/runs/${plain.id}`)).json.settings.tau_epsilon).toBe(0.05);
  });

  it("a run queued under an older engine is not finished by this one (its summaries differ: failed, naming engine_version); a finished run's cells replay when this engine draws them identically, else 409", async () => {
    const queuedOld = await launch({ runs: 10, seed: 3, t_end: 20 });
    await db("runs").where("id", queuedOld.id).update({ engine_version: "burstwise-ssa/0.2.0" });
    const tau = await launch({ method: "tau", runs: 10, seed: 3, t_end: 20 });
    const ssa = await launch({ runs: 10, seed: 3, t_end: 20 });
    await worker();
    const failed = await waitFor(queuedOld.id, finished);
    expect(failed.status).toBe("failed");
    expect(failed.error).toMatch(/^engine_version: queued under burstwise-ssa\/0\.2\.0/);
    expect((await waitFor(tau.id, finished)).status).toBe("succeeded");
    expect((await waitFor(ssa.id, finished)).status).toBe("succeeded");
    // Recorded by older engines once finished: 0.4.0 draws direct-method cells from another
    // stream than 0.3.0 and 0.1.0 did (409), tau cells as 0.3.0 and 0.2.0 did but not 0.1.0.
    await db("runs").whereIn("id", [tau.id, ssa.id]).update({ engine_version: "burstwise-ssa/0.1.0" });
    const old = await modeler.request("GET", `/api/runs/${tau.id}/cells/0`);
    expect(old.status).toBe(409);
    expect(old.json.error).toMatch(/^engine_version: this tau run was computed by burstwise-ssa\/0\.1\.0/);
    await db("runs").whereIn("id", [tau.id, ssa.id]).update({ engine_version: "burstwise-ssa/0.3.0" });
    const oldSsa = await modeler.request("GET", `/api/runs/${ssa.id}/cells/0`);
    expect(oldSsa.status).toBe(409);
    expect(oldSsa.json.error).toMatch(/^engine_version: this ssa run was computed by burstwise-ssa\/0\.3\.0/);
    expect((await modeler.request("GET", `/api/runs/${tau.id}/cells/0`)).status).toBe(200);
  });

  it("tau_epsilon outside (0, 0.2] or with another method is a 422 naming it, and nothing is stored", async () => {
    const before = Number((await db("runs").count({ n: "*" }))[0]?.n);
    for (const [body, message] of [
      [{ method: "tau", tau_epsilon: 0.5 }, /^tau_epsilon: must be at most 0.2/],
      [{ method: "tau", tau_epsilon: 0 }, /^tau_epsilon: must be > 0/],
      [{ method: "ssa", tau_epsilon: 0.05 }, /^tau_epsilon: applies only to method "tau"/],
    ] as const) {
      const r = await modeler.request("POST", "/api/runs", { version_id: versionId, t_end: 10, dt: 1, runs: 2, ...body });
      expect(r.status, r.text).toBe(422);
      expect(r.json.error).toMatch(message);
    }
    expect(Number((await db("runs").count({ n: "*" }))[0]?.n)).toBe(before);
  });

  it("a run without burn_in takes it from the circuit's relaxation time; its summary carries 95% intervals and the stationarity warnings, as `cli simulate` does", async () => {
    await worker();
    const reporter = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...reporter, name: `Two-stage reporter ${Date.now()}` } });
    expect(c.status, c.text).toBe(201);
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 200, dt: 1, runs: 300, seed: 8 });
    expect(r.status, r.text).toBe(202);
    const run = await waitFor(r.json.id, finished);
    expect(run.status).toBe("succeeded");
    expect(run.settings.burn_in).toBeUndefined();
    const summary = (await modeler.request("GET", `/api/runs/${r.json.id}/summary`)).json;
    // 5 relaxation times (1/gp = 50 min) do not fit in t_end = 200: capped at t_end / 2, and said so.
    expect(summary.burn_in).toBe(100);
    expect(summary.burn_in_rule).toMatchObject({ source: "relaxation", relaxation_times: 5 });
    expect(summary.warnings.map((w: any) => `${w.code}:${w.field}`)).toEqual(["window-too-short:t_end", "not-stationary:stationary.P"]);
    for (const sp of ["M", "P"]) {
      for (const where of ["stationary", "final"]) {
        const m = summary[where][sp];
        expect(m.ci).toMatchObject({ level: 0.95, method: "percentile bootstrap over cells, 1000 replicates" });
        for (const k of ["mean", "cv", "fano"]) {
          expect(m.ci[k][0], `${where}.${sp}.ci.${k}`).toBeLessThanOrEqual(m[k]);
          expect(m.ci[k][1], `${where}.${sp}.ci.${k}`).toBeGreaterThanOrEqual(m[k]);
        }
      }
    }
    const cli = runCli(["simulate", "examples/two-stage-reporter.circuit.json", "--runs", "300", "--seed", "8", "--t-end", "200", "--dt", "1", "--threads", "1"]);
    expect(cli.status, cli.stderr).toBe(0);
    expect(JSON.stringify({ ...pick(summary), w: summary.warnings, b: summary.burn_in })).toBe(JSON.stringify({ ...pick(cli.json), w: cli.json.warnings, b: cli.json.burn_in }));
  });

  it("a circuit with a schedule (format /2) runs through the API and the worker with the numbers, fired changes and warnings of `cli simulate`, by the direct method and by tau-leaping, timed and triggered", async () => {
    await worker();
    const induced = JSON.parse(readFileSync("examples/two-stage-reporter-induction.circuit.json", "utf8"));
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...induced, name: `Induction ${Date.now()}` } });
    expect(c.status, c.text).toBe(201);
    const stored = await modeler.request("GET", `/api/versions/${c.json.version_id}`);
    expect(JSON.stringify(stored.json)).toContain('"schedule":[{"at":100,"set":{"km":2}}]');
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 300, dt: 5, runs: 120, seed: 31, burn_in: 50 });
    expect(r.status, r.text).toBe(202);
    const run = await waitFor(r.json.id, finished);
    expect(run.status, JSON.stringify(run)).toBe("succeeded");
    const summary = (await modeler.request("GET", `/api/runs/${r.json.id}/summary`)).json;
    const cli = runCli(["simulate", "examples/two-stage-reporter-induction.circuit.json", "--runs", "120", "--seed", "31", "--t-end", "300", "--dt", "5", "--burn-in", "50", "--threads", "1"]);
    expect(cli.status, cli.stderr).toBe(0);
    expect(JSON.stringify({ ...pick(summary), s: summary.schedule, w: summary.warnings })).toBe(JSON.stringify({ ...pick(cli.json), s: cli.json.schedule, w: cli.json.warnings }));
    expect(summary.schedule).toEqual([{ index: 0, at: 100, set: { km: 2 }, cells: 120, of: 120 }]);
    expect(summary.warnings.map((w: any) => w.code)).toContain("schedule-after-burn-in");
    // The mean-field trace stored beside it takes the step too.
    expect(summary.trace.P[summary.times.indexOf(300)]).toBeGreaterThan(800);
    const cell = await modeler.request("GET", `/api/runs/${r.json.id}/cells/9`);
    expect(cell.json.values).toEqual(runCli(["trajectory", "examples/two-stage-reporter-induction.circuit.json", "--seed", "31", "--index", "9", "--t-end", "300", "--dt", "5"]).json.values);

    // Tau-leaping takes the same schedule (a change is a hard stop of a leap), with the CLI's numbers.
    const tau = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "tau", t_end: 300, dt: 5, runs: 40, seed: 1, burn_in: 50 });
    expect(tau.status, tau.text).toBe(202);
    expect((await waitFor(tau.json.id, finished)).status).toBe("succeeded");
    const tauSummary = (await modeler.request("GET", `/api/runs/${tau.json.id}/summary`)).json;
    const tauCli = runCli(["simulate", "examples/two-stage-reporter-induction.circuit.json", "--method", "tau", "--runs", "40", "--seed", "1", "--t-end", "300", "--dt", "5", "--burn-in", "50", "--threads", "1"]);
    expect(tauCli.status, tauCli.stderr).toBe(0);
    expect(JSON.stringify({ ...pick(tauSummary), s: tauSummary.schedule })).toBe(JSON.stringify({ ...pick(tauCli.json), s: tauCli.json.schedule }));

    // A triggered change: when the protein passes 300, the transcription drops back 5 min later.
    const triggered = { ...induced, name: `Induction with feedback ${Date.now()}`, schedule: [...induced.schedule, { when: "P > 300", delay: 5, set: { km: 0.5 } }] };
    const file = join(mkdtempSync(join(tmpdir(), "bw-trigger-")), "triggered.circuit.json");
    writeFileSync(file, JSON.stringify(triggered));
    const t = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: triggered });
    expect(t.status, t.text).toBe(201);
    const tr = await modeler.request("POST", "/api/runs", { version_id: t.json.version_id, method: "ssa", t_end: 300, dt: 5, runs: 60, seed: 4, burn_in: 50 });
    expect(tr.status, tr.text).toBe(202);
    expect((await waitFor(tr.json.id, finished)).status).toBe("succeeded");
    const trSummary = (await modeler.request("GET", `/api/runs/${tr.json.id}/summary`)).json;
    const trCli = runCli(["simulate", file, "--runs", "60", "--seed", "4", "--t-end", "300", "--dt", "5", "--burn-in", "50", "--threads", "1"]);
    expect(trCli.status, trCli.stderr).toBe(0);
    expect(JSON.stringify({ ...pick(trSummary), s: trSummary.schedule, w: trSummary.warnings })).toBe(JSON.stringify({ ...pick(trCli.json), s: trCli.json.schedule, w: trCli.json.warnings }));
    expect(trSummary.schedule[1]).toMatchObject({ index: 1, when: "P > 300", delay: 5, set: { km: 0.5 }, of: 60 });
    expect(trSummary.schedule[1].cells).toBeGreaterThan(50);
    expect(trSummary.schedule[1].first_at.mean).toBeGreaterThan(100);
    // A replayed cell reports its own firing, as the command line's trajectory does.
    const trCell = await modeler.request("GET", `/api/runs/${tr.json.id}/cells/3`);
    const trReplay = runCli(["trajectory", file, "--seed", "4", "--index", "3", "--t-end", "300", "--dt", "5"]);
    expect(trCell.json.values).toEqual(trReplay.json.values);

    // A comparison of scheduled designs by tau-leaping is accepted like any other.
    const cmp = await modeler.request("POST", "/api/comparisons", {
      lab_id: labId, name: `Induction by tau ${Date.now()}`,
      designs: [{ version_id: c.json.version_id }, { version_id: c.json.version_id, overrides: { kp: 3 } }],
      settings: { method: "tau", t_end: 300, dt: 5, runs: 10 },
    });
    expect(cmp.status, cmp.text).toBe(201);
  });

  it("a deterministic trace run stores the mean-field path", async () => {
    await worker();
    const { id } = await launch({ method: "ode" });
    const run = await waitFor(id, finished);
    expect(run).toMatchObject({ status: "succeeded", kind: "trace" });
    const summary = (await modeler.request("GET", `/api/runs/${id}/summary`)).json;
    const cli = runCli(["simulate", "examples/ring-timer.circuit.json", "--method", "ode", "--t-end", "200", "--dt", "1"]);
    expect(summary.trace).toEqual(cli.json.trace);
    expect(summary.runs).toBe(1);
  });
});

describe("rates that read the time t", () => {
  const timed = {
    format: "burstwise.circuit/1",
    name: `Timed production ${Date.now()}`,
    units: { time: "min", amount: "molecules" },
    species: [{ id: "A", initial: 0 }],
    parameters: { k: 10, g: 0.1 },
    reactions: [
      { id: "make", products: { A: 1 }, rate: { law: "expression", expression: "k * piecewise(1, t < 50, 0.2)" } },
      { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
    ],
  };

  it("a stochastic run of a circuit whose rate reads t is a 422 naming the reaction and stores nothing; the ODE run of it succeeds with `cli simulate`'s trace", async () => {
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: timed });
    expect(c.status, c.text).toBe(201);
    const before = Number((await db("runs").count("* as n").first())!.n);
    for (const method of ["ssa", "tau"]) {
      const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method, t_end: 100, dt: 1, runs: 4 });
      expect(r.status, r.text).toBe(422);
      expect(r.json.error).toBe("reactions[0].rate.expression: depends on time t; stochastic runs need rates that depend on the state only (use a schedule for a timed change)");
    }
    expect(Number((await db("runs").count("* as n").first())!.n)).toBe(before);
    await worker();
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ode", t_end: 100, dt: 1 });
    expect(r.status, r.text).toBe(202);
    const run = await waitFor(r.json.id, finished);
    expect(run.status).toBe("succeeded");
    const summary = (await modeler.request("GET", `/api/runs/${r.json.id}/summary`)).json;
    const dir = mkdtempSync(join(tmpdir(), "bw-timed-"));
    writeFileSync(join(dir, "timed.circuit.json"), JSON.stringify(timed));
    const cli = runCli(["simulate", join(dir, "timed.circuit.json"), "--method", "ode", "--t-end", "100", "--dt", "1"]);
    expect(summary.trace).toEqual(cli.json.trace);
  });
});

describe("cancel, roles and limits", () => {
  it("cancelling mid-run stops it; a second cancel is a 409", async () => {
    await worker({ WORKER_CONCURRENCY: "1" });
    const { id } = await launch({ runs: 2000, seed: 5, t_end: 2000 });
    await waitFor(id, (r) => r.status === "running", 60_000);
    const c = await modeler.request("POST", `/api/runs/${id}/cancel`);
    expect(c.status).toBe(200);
    expect(c.json.status).toBe("cancelled");
    await new Promise((r) => setTimeout(r, 2500));
    const run = (await modeler.request("GET", `/api/runs/${id}`)).json;
    expect(run.status).toBe("cancelled");
    expect(run.chunks_done).toBeLessThan(run.chunks_total);
    expect((await modeler.request("POST", `/api/runs/${id}/cancel`)).status).toBe(409);
    expect((await modeler.request("GET", `/api/runs/${id}/summary`)).status).toBe(409);
  });

  it("a reviewer cannot create or cancel a run (403); another lab's run is a 404", async () => {
    const reviewer = new Client();
    await reviewer.signIn("reviewer@sentinel.example", "sentinel-demo");
    const create = await reviewer.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 10, dt: 1 });
    expect(create.status).toBe(403);
    const { id } = await launch({ runs: 10 });
    expect((await reviewer.request("POST", `/api/runs/${id}/cancel`)).status).toBe(403);
    expect((await reviewer.request("GET", `/api/runs/${id}`)).status).toBe(200);
    const stranger = await newUser("stranger");
    for (const path of [`/api/runs/${id}`, `/api/runs/${id}/summary`, `/api/runs/${id}/cells/0`]) {
      expect((await stranger.client.request("GET", path)).status).toBe(404);
    }
    expect((await stranger.client.request("POST", `/api/runs/${id}/cancel`)).status).toBe(404);
    expect((await stranger.client.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 10, dt: 1 })).status).toBe(404);
    await modeler.request("POST", `/api/runs/${id}/cancel`);
  });

  const bad: [string, Record<string, unknown>, number, RegExp][] = [
    ["an unknown circuit version", { version_id: "987654321" }, 404, /^version: /],
    ["a negative cell count", { runs: -5 }, 422, /^runs: /],
    ["t_end below dt", { t_end: 1, dt: 5 }, 422, /^dt: must be <= t_end/],
    ["10^9 cells", { runs: 1e9 }, 422, /^runs: at most 20000/],
    ["an unknown method", { method: "euler" }, 422, /^method: /],
    ["an override of an unknown parameter", { overrides: { Kc: 3 } }, 422, /^overrides\.Kc: unknown parameter/],
    ["a grid of a billion points", { t_end: 1e9, dt: 1 }, 422, /^dt: gives more than/],
  ];
  it.each(bad)("%s is a clear %i and stores no run", async (_label, body, status, message) => {
    const before = Number((await db("runs").count("* as n").first())!.n);
    const r = await modeler.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 100, dt: 1, ...body });
    expect(r.status).toBe(status);
    expect(r.json.error).toMatch(message);
    expect(Number((await db("runs").count("* as n").first())!.n)).toBe(before);
  });

  it("a cell that exceeds the event cap fails its run with the reason (not a stuck run)", async () => {
    const runaway = {
      format: "burstwise.circuit/1", name: `Runaway ${Date.now()}`, units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }], parameters: { k: 1e9 },
      reactions: [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }, { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: 1 } }],
    };
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: runaway });
    await worker();
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 100, dt: 1, runs: 2 });
    const run = await waitFor(r.json.id, finished, 120_000);
    expect(run.status).toBe("failed");
    expect(run.error).toMatch(/event/i);
  });
});

describe("queue limit and graceful shutdown", () => {
  it("a lab with its most runs queued or running (100 by default) gets a 429 naming runs, and nothing is stored", async () => {
    // Tiny runs: the cost budget (tests/integration/run-budget.test.ts) is far away; the count is what stops them.
    const crowd = await newUser("crowd");
    const c = await crowd.client.request("POST", "/api/circuits", { lab_id: crowd.labId, circuit: ringTimer });
    const tiny = { version_id: c.json.version_id, method: "ssa", t_end: 10, dt: 1 };
    let accepted = 0;
    let over: Awaited<ReturnType<typeof crowd.client.request>> | null = null;
    for (let i = 0; i < 1000 && !over; i++) {
      const r = await crowd.client.request("POST", "/api/runs", tiny);
      if (r.status === 202) accepted++;
      else over = r;
    }
    expect(accepted).toBe(100);
    expect(over!.status).toBe(429);
    expect(over!.json.error).toMatch(/^runs: the lab would have more than 100 runs queued or running \(queued 100, this run 1; each design of a comparison counts\)/);
    expect(Number((await db("runs").where({ lab_id: crowd.labId }).count("* as n").first())!.n)).toBe(100);
    await db("runs").where({ lab_id: crowd.labId }).whereIn("status", ["queued", "running"]).update({ status: "cancelled" });
  });

  it("SIGTERM lets the worker finish the chunk in hand before it exits; a new worker completes the run", async () => {
    const w = await worker({ WORKER_CONCURRENCY: "1" });
    const { id } = await launch({ runs: 150, seed: 31, t_end: 2000 });
    // Wait until the worker holds a chunk job that has not landed yet: the chunk in hand.
    let inHand: number | null = null;
    for (let i = 0; i < 600 && inHand === null; i++) {
      const active = await db.raw(`select (data->>'chunkIndex')::int as chunk from pgboss.job where name = 'run-chunk' and state = 'active' and data->>'runId' = ?`, [id]);
      for (const row of active.rows) {
        if (!(await db("run_chunks").where({ run_id: id, chunk_index: row.chunk }).first())) inHand = row.chunk;
      }
      if (inHand === null) await new Promise((r) => setTimeout(r, 50));
    }
    expect(inHand).not.toBeNull();
    await stopWorker(w, "SIGTERM");
    expect(w.exitCode).toBe(0);
    // The chunk in hand was finished and stored before the worker exited, not dropped.
    expect(await db("run_chunks").where({ run_id: id, chunk_index: inHand }).first()).toBeTruthy();
    await worker();
    const run = await waitFor(id, finished, 120_000);
    expect(run.status).toBe("succeeded");
  });
});
