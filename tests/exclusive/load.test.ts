import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { quantile } from "simple-statistics";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { isFinished, runCli, waitForRun, workerPool } from "../support/worker";

// A bounded load on loopback: 50 signed-in members read the lab's runs, a run's summary and a
// comparison as fast as they can while 20 ensembles are launched and run by two real workers.
// Nothing may be lost: every accepted run finishes once (one result, each chunk stored once, one
// finish notice), and no read answers 5xx. Throughput and the p50/p95/p99 latencies are printed
// for the note (speed targets live in `npm run bench`, not here). Runs in the `exclusive`
// project, alone, so other suites neither slow it nor share its workers.

/** The statistics a run and the command line must agree on (all but timings). */
const STATS = ["runs", "events", "times", "mean", "sd", "quantiles", "final", "stationary", "period", "stationary_distribution", "burn_in", "warnings"] as const;
const pick = (summary: Record<string, unknown>) => Object.fromEntries(STATS.map((k) => [k, summary[k]]));

const READERS = 50;
const ENSEMBLES = 20;
const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
const workers = workerPool();
let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
let versionId: string;
let finishedRunId: string;
let comparisonId: string;

beforeAll(async () => {
  db = testDb();
  owner = await newUser("load-owner");
  const c = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: birthDeath });
  expect(c.status, c.text).toBe(201);
  versionId = c.json.version_id;
  await workers.start();
  await workers.start();
  // Something finished to read: one run and one two-design comparison.
  const r = await owner.client.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 100, dt: 1, runs: 100, seed: 1 });
  expect(r.status, r.text).toBe(202);
  finishedRunId = r.json.id;
  expect((await waitForRun(owner.client, finishedRunId)).status).toBe("succeeded");
  const cmp = await owner.client.request("POST", "/api/comparisons", {
    lab_id: owner.labId, name: "Under load", designs: [{ version_id: versionId }, { version_id: versionId, overrides: { k: 20 } }], settings: { t_end: 50, dt: 1, runs: 50 }, launch: true,
  });
  expect(cmp.status, cmp.text).toBe(201);
  comparisonId = cmp.json.id;
  const until = Date.now() + 120_000;
  while (Date.now() < until) {
    const got = await owner.client.request("GET", `/api/comparisons/${comparisonId}`);
    if (got.json?.status === "succeeded" && !got.json.finishing) break;
    await new Promise((res) => setTimeout(res, 300));
  }
}, 240_000);

afterAll(async () => {
  await workers.killAll();
  await db?.destroy();
});

/** Members of the owner's lab, each signed in with a session of their own. */
async function readers(n: number): Promise<Client[]> {
  const out: Client[] = [];
  for (let i = 0; i < n; i++) {
    const u = await newUser(`load-reader-${i}`);
    const added = await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: u.email, role: "reviewer" });
    expect(added.status, added.text).toBe(201);
    out.push(u.client);
  }
  return out;
}

describe(`${READERS} readers while ${ENSEMBLES} ensembles run`, () => {
  it("answers every read without a 5xx, and every accepted run finishes exactly once", async () => {
    const clients = await readers(READERS);
    const reads = [
      `/api/runs?lab_id=${owner.labId}`,
      `/api/runs/${finishedRunId}`,
      `/api/runs/${finishedRunId}/summary`,
      `/api/comparisons/${comparisonId}`,
      `/api/comparisons?lab_id=${owner.labId}`,
    ];
    const latencies: number[] = [];
    const failures: string[] = [];
    let stop = false;
    const t0 = performance.now();
    const readLoops = clients.map(async (c, k) => {
      for (let i = k; !stop; i++) {
        const path = reads[i % reads.length]!;
        const s = performance.now();
        const r = await c.request("GET", path);
        latencies.push(performance.now() - s);
        if (r.status !== 200) failures.push(`${path}: ${r.status} ${r.text.slice(0, 120)}`);
      }
    });
    // 20 ensembles of different seeds and sizes, launched while the readers read.
    const accepted: string[] = [];
    for (let i = 0; i < ENSEMBLES; i++) {
      const r = await owner.client.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 200, dt: 1, runs: 100 + 10 * i, seed: 100 + i });
      expect(r.status, r.text).toBe(202);
      accepted.push(r.json.id);
    }
    const finished = await Promise.all(accepted.map((id) => waitForRun(owner.client, id, isFinished, 600_000)));
    stop = true;
    await Promise.all(readLoops);
    const seconds = (performance.now() - t0) / 1000;

    expect(failures).toEqual([]);
    expect(finished.map((r) => r.status)).toEqual(accepted.map(() => "succeeded"));
    // Once: one stored result per run, every chunk stored once, one finish notice per run.
    const results = await db("run_results").whereIn("run_id", accepted).select("run_id");
    expect(results.length).toBe(ENSEMBLES);
    for (const r of finished) {
      const chunks = await db("run_chunks").where({ run_id: r.id }).select("chunk_index");
      expect(chunks.length, `run ${r.id}`).toBe(r.chunks_total);
      expect(new Set(chunks.map((c) => c.chunk_index)).size).toBe(r.chunks_total);
    }
    // With the numbers its seed gives: each run's statistics equal `cli simulate` with the same
    // seed and settings (a chunk merged twice, or lost, would change the events and the moments).
    for (const [i, r] of finished.entries()) {
      const summary = (await owner.client.request("GET", `/api/runs/${r.id}/summary`)).json;
      const cli = runCli(["simulate", "examples/birth-death.circuit.json", "--runs", String(100 + 10 * i), "--seed", String(100 + i), "--t-end", "200", "--dt", "1"]);
      expect(cli.status, cli.stderr).toBe(0);
      expect(JSON.stringify(pick(summary)), `run ${r.id}`).toBe(JSON.stringify(pick(cli.json)));
    }

    const q = (p: number) => quantile(latencies, p).toFixed(0);
    console.log(
      `[load] ${READERS} readers, ${ENSEMBLES} ensembles (${finished.reduce((s, r) => s + r.settings.runs, 0)} cells) in ${seconds.toFixed(1)} s: ` +
        `${latencies.length} reads, ${(latencies.length / seconds).toFixed(0)} reads/s, p50 ${q(0.5)} ms, p95 ${q(0.95)} ms, p99 ${q(0.99)} ms, max ${Math.max(...latencies).toFixed(0)} ms; 0 lost`,
    );
    expect(latencies.length).toBeGreaterThan(READERS * 5);
  }, 900_000);
});
