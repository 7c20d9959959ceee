import { readFileSync } from "node:fs";
import { gzipSync } from "node:zlib";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { compareCv } from "../../ssa/bootstrap";
import { decodeCellStats, encodeCellStats, type CellStats } from "../../ssa/cell-stats";
import { newUser } from "../support/client";
import { testDb } from "../support/db";
import { testEnv } from "../support/env";
import { workerPool } from "../support/worker";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));

/** A linear chain ∅ → S0 → S1 → … → S(n−1) → ∅ in molecules: large, stable, and cheap to simulate briefly. */
function chainCircuit(n: number) {
  const species = Array.from({ length: n }, (_, i) => ({ id: `S${i}`, initial: 5 }));
  const reactions: object[] = [{ id: "make0", products: { S0: 1 }, rate: { law: "mass_action", k: "k" } }];
  for (let i = 1; i < n; i++) reactions.push({ id: `conv${i}`, reactants: { [`S${i - 1}`]: 1 }, products: { [`S${i}`]: 1 }, rate: { law: "mass_action", k: "k" } });
  reactions.push({ id: "lose_last", reactants: { [`S${n - 1}`]: 1 }, rate: { law: "mass_action", k: "g" } });
  return { format: "burstwise.circuit/1", name: `Chain ${n} ${Date.now()}`, units: { time: "min", amount: "molecules" }, species, parameters: { k: 1, g: 0.1 }, reactions };
}

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
const workers = workerPool();

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
      for (let attempt = 1; ; attempt++) {
        try {
          await (await fetch(`${testEnv().baseUrl}/api/health`)).text();
          break;
        } catch (e) {
          if (attempt === 3) throw e; // a stalled thread may drop kept-alive connections: that is a stall too
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
  const get = () => fetch(testEnv().baseUrl + path, { headers: { cookie: owner.client.cookieHeader() } });
  // A kept-alive connection the server closed just as it was reused fails at once ("other side
  // closed"); the GET is idempotent, so it is sent once more.
  const res = await get().catch(get);
  const text = await res.text();
  return { status: res.status, json: JSON.parse(text), cache: res.headers.get("x-burstwise-cache") };
}

async function waitForComparison(id: string, done: (c: any) => boolean, timeoutMs = 180_000): Promise<any> {
  const until = Date.now() + timeoutMs;
  let last: any;
  while (Date.now() < until) {
    last = (await owner.client.request("GET", `/api/comparisons/${id}`)).json;
    if (done(last)) return last;
    await new Promise((r) => setTimeout(r, 300));
  }
  throw new Error(`comparison ${id} stuck: ${JSON.stringify(last).slice(0, 2000)}`);
}
const ended = (c: any) => ["succeeded", "failed", "cancelled"].includes(c.status);

/** Launches a comparison of two designs and lets a worker run it to the end; the comparison as read then. */
async function runComparison(versionId: string, settings: Record<string, unknown>, overrides: Record<string, number>): Promise<any> {
  const r = await owner.client.request("POST", "/api/comparisons", {
    lab_id: owner.labId, name: `Off thread ${Date.now()}`, launch: true, settings,
    designs: [{ version_id: versionId, label: "A" }, { version_id: versionId, label: "B", overrides }],
  });
  expect(r.status, r.text).toBe(201);
  const t0 = performance.now();
  await workers.start();
  const c = await waitForComparison(r.json.id, ended, 400_000);
  console.log(`comparison ${r.json.id} ran and got its results in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  expect(c.status, c.error).toBe("succeeded");
  await workers.killAll();
  return c;
}

/**
 * Health answers in a few ms on an idle machine and well under a second on a loaded one. Before
 * the change a read computing a 300-species comparison's results held the web thread for 5–7 s
 * (every health call waited that long), and a difference test of two 20,000-cell designs for 4–8 s.
 */
const HEALTH_MAX_MS = 1500;

beforeAll(async () => {
  db = testDb();
  owner = await newUser("cmp-offthread");
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db("runs").where({ lab_id: owner.labId }).whereIn("status", ["queued", "running"]).update({ status: "cancelled" });
  await db.destroy();
});

describe("comparison results and difference tests off the web thread", () => {
  it("a read of a 300-species comparison whose results the worker's hook missed answers at once (finishing), without stalling /api/health; a worker then stores the same results", async () => {
    const v = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: chainCircuit(300) });
    expect(v.status, v.text).toBe(201);
    const done = await runComparison(v.json.version_id, { t_end: 2, dt: 1, runs: 10, seed: 17 }, { k: 2 });
    expect(done.results.designs[0].species).toHaveLength(300);
    expect(done.results.designs[0].lna.stable).toBe(true);

    // The hook that computes the results missed (a worker died in it): the comparison is still
    // running, every design run succeeded a while ago, and no results are stored.
    await db("comparisons").where({ id: done.id }).update({ status: "running", results: null, finished_at: null });
    await db("runs").whereIn("id", done.designs.map((d: any) => d.run.id)).update({ finished_at: db.raw("now() - interval '1 minute'") });

    const read = await whileWatchingHealth(() => getWithHeaders(`/api/comparisons/${done.id}`));
    console.log(`GET of the comparison with missed results: ${read.result.status} in ${read.ms.toFixed(0)} ms; health max ${Math.max(...read.health).toFixed(0)} ms over ${read.health.length} calls`);
    expect(read.result.status).toBe(200);
    expect(Math.max(...read.health)).toBeLessThan(HEALTH_MAX_MS);
    expect(read.ms).toBeLessThan(HEALTH_MAX_MS);
    // The read computed nothing: it asked the worker to, and says the results are being computed.
    expect(read.result.json).toMatchObject({ status: "running", finishing: true, results: null });
    const again = await getWithHeaders(`/api/comparisons/${done.id}`);
    expect(again.json).toMatchObject({ status: "running", finishing: true });
    const jobs = await db("pgboss.job").where({ name: "comparison-finish", singleton_key: String(done.id) }).select("state");
    expect(jobs).toHaveLength(1); // two reads, one job

    // A worker computes them: the same numbers as the run-finished hook gave (same seed), newly dated.
    await workers.start();
    const finished = await waitForComparison(done.id, ended, 120_000);
    expect(finished.status, finished.error).toBe("succeeded");
    expect(finished.finishing).toBe(false);
    expect(finished.results.computed_at).not.toBe(done.results.computed_at);
    expect({ ...finished.results, computed_at: null }).toEqual({ ...done.results, computed_at: null });
  }, 600_000);

  it("the difference test of two 20,000-cell designs runs on the engine pool without stalling /api/health, equals the bootstrap computed here, and is stored (second call a cache hit)", async () => {
    const v = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: { ...birthDeath, name: `Birth-death ${Date.now()}` } });
    expect(v.status, v.text).toBe(201);
    const c = await runComparison(v.json.version_id, { t_end: 20, dt: 1, runs: 10, seed: 23 }, { k: 40 });
    const [a, b] = c.designs;

    // Each design as if it had run the most cells a run may have (20,000): per-cell sums of
    // Poisson-like counts written in the stored encoding, so the test need not simulate them.
    const big = (seed: number, mean: number): CellStats => {
      const cells = 20_000;
      let s = seed;
      const next = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648);
      const sum = new Float64Array(cells);
      const sumSq = new Float64Array(cells);
      for (let i = 0; i < cells; i++) {
        for (let k = 0; k < 10; k++) {
          const x = Math.round(mean + Math.sqrt(mean) * (next() + next() + next() - 1.5) * 2);
          sum[i] += x;
          sumSq[i] += x * x;
        }
      }
      const zero = () => new Float64Array(cells);
      return { cells, nSpecies: 1, samples: 10, sum, sumSq, periodCount: zero(), periodSum: zero(), periodSumSq: zero() };
    };
    const csA = big(1, 100);
    const csB = big(2, 400);
    for (const [d, cs] of [[a, csA], [b, csB]] as const) {
      const bytes = encodeCellStats(cs);
      await db("run_results").where({ run_id: d.run.id }).update({ cell_stats_gz: gzipSync(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)) });
    }

    const path = `/api/comparisons/${c.id}/test?a=${a.id}&b=${b.id}&species=X`;
    const first = await whileWatchingHealth(() => getWithHeaders(path));
    console.log(`difference test of 2 × 20,000 cells: ${first.result.status} in ${first.ms.toFixed(0)} ms; health max ${Math.max(...first.health).toFixed(0)} ms over ${first.health.length} calls`);
    expect(first.result.status, JSON.stringify(first.result.json)).toBe(200);
    expect(first.health.length).toBeGreaterThan(3);
    expect(Math.max(...first.health)).toBeLessThan(HEALTH_MAX_MS);
    expect(first.result.cache).toBe("miss");

    // The same test computed here from the same sums, seed and stream.
    const t = compareCv(decodeCellStats(encodeCellStats(csA)), 0, decodeCellStats(encodeCellStats(csB)), 0, {
      seed: c.seed, stream: 1_000_000 + 2 * (a.position * 64 + b.position), replicates: 2000, level: 0.95, paired: false,
    });
    expect(first.result.json.paired).toBe(false);
    expect(first.result.json.cv).toMatchObject({ difference: t.cv.difference, lo: t.cv.lo, hi: t.cv.hi, p_value: t.cv.pValue, share_b_lower: t.cv.shareBLower, replicates: 2000 });
    expect(first.result.json.cv.significant).toBe(true); // CV 1/√100 against 1/√400

    const second = await whileWatchingHealth(() => getWithHeaders(path));
    console.log(`the same test again: ${second.result.status} (${second.result.cache}) in ${second.ms.toFixed(0)} ms`);
    expect(second.result.cache).toBe("hit");
    expect(second.result.json).toEqual(first.result.json);
    expect(second.ms).toBeLessThan(1000);
    const rows = await db("comparison_tests").where({ comparison_id: c.id }).select("design_a", "design_b", "species");
    expect(rows).toEqual([{ design_a: a.id, design_b: b.id, species: "X" }]);

    // Bad input is still a 422 naming the field, computed nothing, stored nothing.
    const bad = await owner.client.request("GET", `/api/comparisons/${c.id}/test?a=${a.id}&b=${b.id}&species=Y`);
    expect(bad.status).toBe(422);
    expect(bad.json.error).toMatch(/^species: /);
    expect(await db("comparison_tests").where({ comparison_id: c.id }).count("* as n").first()).toEqual({ n: "1" });
  }, 300_000);

  it("launching a run of a stiff 200-species, 1,000-reaction circuit estimates its cost on the engine pool without stalling /api/health", async () => {
    // Rates spread over six orders of magnitude along the chain: stiff, so the mean-field
    // integration of the cost estimate takes the implicit solver, at the size bound (200 × 1,000).
    const species = Array.from({ length: 200 }, (_, i) => ({ id: `S${i}`, initial: 5 }));
    const reactions: object[] = [{ id: "make0", products: { S0: 1 }, rate: { law: "mass_action", k: 1 } }];
    for (let i = 1; i < 200; i++) reactions.push({ id: `conv${i}`, reactants: { [`S${i - 1}`]: 1 }, products: { [`S${i}`]: 1 }, rate: { law: "mass_action", k: Math.pow(10, (i % 7) - 2) } });
    for (let j = reactions.length; j < 1000; j++) reactions.push({ id: `lose${j}`, reactants: { [`S${j % 200}`]: 1 }, rate: { law: "mass_action", k: 0.1 } });
    const circuit = { format: "burstwise.circuit/1", name: `Stiff chain ${Date.now()}`, units: { time: "min", amount: "molecules" }, species, parameters: {}, reactions };
    const v = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit });
    expect(v.status, v.text).toBe(201);
    const launch = await whileWatchingHealth(() => owner.client.request("POST", "/api/runs", { version_id: v.json.version_id, method: "ssa", t_end: 10_000, dt: 100, runs: 10, seed: 3 }));
    console.log(`launch of the stiff chain: ${launch.result.status} in ${launch.ms.toFixed(0)} ms; health max ${Math.max(...launch.health).toFixed(0)} ms over ${launch.health.length} calls; ${launch.result.text.slice(0, 200)}`);
    expect(launch.result.status, launch.result.text).toBe(202);
    expect(launch.result.json.cost.cell_events).toBeGreaterThan(0);
    expect(Math.max(...launch.health)).toBeLessThan(HEALTH_MAX_MS);
  }, 120_000);
});
