import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { Client } from "../support/client";
import { testDb } from "../support/db";
import { testEnv } from "../support/env";
import { isFinished, runCli, waitForRun, workerPool } from "../support/worker";

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));

/**
 * A linear chain ∅ → S0 → S1 → … → S(n−1) → ∅ with `extra` more first-order losses spread over
 * the species: a circuit of any size whose steady state exists and is stable (every species decays).
 */
function chainCircuit(nSpecies: number, nReactions = nSpecies + 1, name = `Chain ${nSpecies}/${nReactions} ${Date.now()}`, k = 1) {
  const species = Array.from({ length: nSpecies }, (_, i) => ({ id: `S${i}`, initial: 1 }));
  const reactions: object[] = [{ id: "make0", products: { S0: 1 }, rate: { law: "mass_action", k: "k" } }];
  for (let i = 1; i < nSpecies; i++) reactions.push({ id: `conv${i}`, reactants: { [`S${i - 1}`]: 1 }, products: { [`S${i}`]: 1 }, rate: { law: "mass_action", k: "k" } });
  reactions.push({ id: "lose_last", reactants: { [`S${nSpecies - 1}`]: 1 }, rate: { law: "mass_action", k: "g" } });
  for (let j = reactions.length; j < nReactions; j++) reactions.push({ id: `lose${j}`, reactants: { [`S${j % nSpecies}`]: 1 }, rate: { law: "mass_action", k: "g" } });
  return { format: "burstwise.circuit/1", name, units: { time: "min", amount: "nM" }, volume_fL: 1, species, parameters: { k, g: 0.1 }, reactions };
}

let db: Knex;
let modeler: Client;
let labId: string;
const workers = workerPool();

async function createVersion(circuit: object): Promise<string> {
  const r = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit });
  expect(r.status, r.text).toBe(201);
  return r.json.version_id;
}

/**
 * Runs `request` while polling GET /api/health every 100 ms; the request's answer, its duration
 * and every health call's latency. A web thread busy with engine work answers no health call
 * until it is done, so the slowest health call is as long as that work.
 */
async function whileWatchingHealth<T>(request: () => Promise<T>): Promise<{ result: T; ms: number; health: number[] }> {
  const health: number[] = [];
  let done = false;
  const poll = (async () => {
    while (!done) {
      const t0 = performance.now();
      // A web thread stuck for seconds drops kept-alive connections (ECONNRESET): that is a
      // stall too, so the call is retried and timed as a whole.
      for (let attempt = 1; ; attempt++) {
        try {
          const res = await fetch(`${testEnv().baseUrl}/api/health`);
          await res.text();
          break;
        } catch (e) {
          if (attempt === 3) throw e;
        }
      }
      health.push(performance.now() - t0);
      await new Promise((r) => setTimeout(r, 100));
    }
  })();
  const t0 = performance.now();
  const result = await request();
  const ms = performance.now() - t0;
  done = true;
  await poll;
  return { result, ms, health };
}

async function getWithHeaders(path: string): Promise<{ status: number; json: any; cache: string | null }> {
  const res = await fetch(testEnv().baseUrl + path, { headers: { cookie: modeler.cookieHeader() } });
  const text = await res.text();
  return { status: res.status, json: JSON.parse(text), cache: res.headers.get("x-burstwise-cache") };
}

// Health answers in a few ms on an idle machine and in well under a second on a loaded one; a
// web thread busy with the engine stalls it for the whole computation (2–15 s for these circuits).
const HEALTH_MAX_MS = 1500;

beforeAll(async () => {
  db = testDb();
  modeler = new Client();
  expect(await modeler.signIn("modeler@sentinel.example", "sentinel-demo")).toBe(true);
  labId = (await modeler.request("GET", "/api/labs")).json.labs.find((l: any) => l.name === "Soil Sentinel").id;
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db.destroy();
});

describe("engine work off the web thread", () => {
  it.each([200, 400])("GET /api/versions/:id/analysis of a %i-species chain leaves /api/health answering; it is answered or refused within the budget, and the second GET comes from the cache", async (n) => {
    const versionId = await createVersion(chainCircuit(n));
    const first = await whileWatchingHealth(() => getWithHeaders(`/api/versions/${versionId}/analysis`));
    console.log(`analysis of ${n} species: ${first.result.status} in ${(first.ms / 1000).toFixed(1)} s; health max ${Math.max(...first.health).toFixed(0)} ms over ${first.health.length} calls`);
    expect([200, 422], JSON.stringify(first.result.json).slice(0, 300)).toContain(first.result.status);
    if (first.result.status === 422) expect(first.result.json.error).toMatch(/^analysis: took longer than \d+ s; the circuit is too large to analyse on the server/);
    else expect(first.result.json.stable).toBe(true);
    expect(first.result.cache).toBe("miss");
    expect(first.ms).toBeLessThan(30_000); // the 10 s budget, plus starting a thread on a loaded machine
    expect(first.health.length).toBeGreaterThan(3);
    expect(Math.max(...first.health)).toBeLessThan(HEALTH_MAX_MS);

    // The second answer is the stored one: same status and body, marked as a hit, and fast.
    const second = await whileWatchingHealth(() => getWithHeaders(`/api/versions/${versionId}/analysis`));
    expect(second.result.status).toBe(first.result.status);
    expect(second.result.json).toEqual(first.result.json);
    expect(second.result.cache).toBe("hit");
    expect(second.ms).toBeLessThan(2000);
  });

  it("GET /api/versions/:id/analysis of a small circuit is the engine's answer, computed once per version", async () => {
    const versionId = await createVersion({ ...ringTimer, name: `Ring timer cache ${Date.now()}` });
    const first = await getWithHeaders(`/api/versions/${versionId}/analysis`);
    expect(first.status).toBe(200);
    expect(first.cache).toBe("miss");
    expect(first.json.oscillatory).toBe(true);
    const second = await getWithHeaders(`/api/versions/${versionId}/analysis`);
    expect(second).toEqual({ ...first, cache: "hit" });
    const rows = await db("version_results").where({ version_id: versionId }).select("kind");
    expect(rows.map((r) => r.kind)).toEqual(["analysis"]);
  });

  it("GET /api/versions/:id/counts of 20,000 reactions is answered within the budget without stalling /api/health, then from the cache", async () => {
    const versionId = await createVersion(chainCircuit(2000, 20_000));
    const first = await whileWatchingHealth(() => getWithHeaders(`/api/versions/${versionId}/counts`));
    console.log(`counts of 20,000 reactions: ${first.result.status} in ${(first.ms / 1000).toFixed(1)} s; health max ${Math.max(...first.health).toFixed(0)} ms over ${first.health.length} calls`);
    expect(first.result.status, JSON.stringify(first.result.json).slice(0, 300)).toBe(200);
    expect(first.result.json.constants).toHaveLength(20_000);
    expect(first.result.json.species).toHaveLength(2000);
    expect(first.result.cache).toBe("miss");
    expect(first.ms).toBeLessThan(30_000);
    expect(Math.max(...first.health)).toBeLessThan(HEALTH_MAX_MS);
    const second = await getWithHeaders(`/api/versions/${versionId}/counts`);
    expect(second.cache).toBe("hit");
    expect(second.json).toEqual(first.result.json);
  });
});

describe("cell replay within the run's limits", () => {
  let versionId: string;
  beforeAll(async () => {
    versionId = await createVersion({ ...ringTimer, name: `Ring timer replay ${Date.now()}` });
  });

  async function launch(body: Record<string, unknown>, vid = versionId) {
    const r = await modeler.request("POST", "/api/runs", { version_id: vid, method: "ssa", t_end: 200, dt: 1, runs: 4, seed: 11, ...body });
    expect(r.status, r.text).toBe(202);
    return r.json.id as string;
  }

  it("a run that has not succeeded (queued, running, failed, cancelled) has no cells to replay: 409 naming status", async () => {
    const id = await launch({});
    for (const status of ["queued", "running", "failed", "cancelled"]) {
      await db("runs").where({ id }).update({ status });
      const r = await modeler.request("GET", `/api/runs/${id}/cells/0`);
      expect(r.status, r.text).toBe(409);
      expect(r.json.error).toMatch(new RegExp(`^status: the run is ${status}; cells are replayed only from runs that succeeded`));
    }
  });

  it("a replay stops at the run's own max_events_per_cell and says so (422 naming it); the normal replay equals `cli trajectory`", async () => {
    await workers.start();
    // Cells 0-4 are served as finalize stored them; cell 6 is replayed, under the run's limits.
    const id = await launch({ runs: 8 });
    const run = await waitForRun(modeler, id, isFinished);
    expect(run.status).toBe("succeeded");
    expect(run.settings.max_events_per_cell).toBe(1e8); // the limit the worker used is stored with the run

    const cell = await modeler.request("GET", `/api/runs/${id}/cells/6`);
    expect(cell.status, cell.text).toBe(200);
    const cli = runCli(["trajectory", "examples/ring-timer.circuit.json", "--seed", "11", "--index", "6", "--t-end", "200", "--dt", "1"]);
    expect(cli.status, cli.stderr).toBe(0);
    expect(cell.text).toBe(JSON.stringify(cli.json));
    expect(cell.json.events).toBeGreaterThan(100);

    // The same run had it been stored with a limit of 100 events per cell.
    await db("runs").where({ id }).update({ settings: db.raw(`settings || '{"max_events_per_cell": 100}'::jsonb`) });
    const capped = await modeler.request("GET", `/api/runs/${id}/cells/6`);
    expect(capped.status, capped.text).toBe(422);
    expect(capped.json.error).toMatch(/^max_events_per_cell: cell 6 exceeded this run's limit of 100 events per cell/);
  });

  it("a cell with more than 1,000,000 values is replayed only in part: species= or every= (422 naming them otherwise)", async () => {
    await workers.start();
    // 12 species × 100,001 grid points = 1,200,012 values; slow rates keep the events few.
    const circuit = chainCircuit(12, 13, `Chain replay ${Date.now()}`, 0.01);
    const vid = await createVersion(circuit);
    const id = await launch({ runs: 1, t_end: 100_000, dt: 1, seed: 5 }, vid);
    const run = await waitForRun(modeler, id, isFinished, 120_000);
    expect(run.status, run.error).toBe("succeeded");

    const whole = await modeler.request("GET", `/api/runs/${id}/cells/0`);
    expect(whole.status).toBe(422);
    expect(whole.json.error).toMatch(/^species: cell 0 has 1,200,012 values \(100,001 grid points × 12 species\), more than the 1,000,000 one replay returns; ask for fewer with species=S0,S1 or every=2/);

    const path = ".local/replay-chain.circuit.json";
    const { writeFileSync, mkdirSync } = await import("node:fs");
    mkdirSync(".local", { recursive: true });
    writeFileSync(path, JSON.stringify(circuit));
    const cli = runCli(["trajectory", path, "--seed", "5", "--index", "0", "--t-end", "100000", "--dt", "1"]);
    expect(cli.status, cli.stderr).toBe(0);

    const some = await modeler.request("GET", `/api/runs/${id}/cells/0?species=S3,S11`);
    expect(some.status, some.text.slice(0, 300)).toBe(200);
    expect(some.json.species).toEqual(["S3", "S11"]);
    expect(Object.keys(some.json.values)).toEqual(["S3", "S11"]);
    expect(some.json.values.S11).toEqual(cli.json.values.S11);
    expect(some.json.times).toEqual(cli.json.times);
    expect(some.json.events).toBe(cli.json.events);

    const thinned = await modeler.request("GET", `/api/runs/${id}/cells/0?every=2`);
    expect(thinned.status).toBe(200);
    expect(thinned.json.times).toEqual(cli.json.times.filter((_: number, g: number) => g % 2 === 0));
    expect(thinned.json.values.S0).toEqual(cli.json.values.S0.filter((_: number, g: number) => g % 2 === 0));

    for (const [query, message] of [
      ["species=S3,Q", /^species: unknown species "Q"/],
      ["every=0", /^every: must be a whole number from 1 to/],
      ["species=S0&every=x", /^every: must be a whole number from 1 to/],
    ] as const) {
      const r = await modeler.request("GET", `/api/runs/${id}/cells/0?${query}`);
      expect(r.status, r.text).toBe(422);
      expect(r.json.error).toMatch(message);
    }
  });
});
