/**
 * The five sample cells a finished ensemble stores at finalize (run_results.cells_gz) are what
 * `GET /api/runs/:id/cells/:index` serves for those indices, cut the same way as a replay; other
 * cells are replayed with the run's own options and equal `cli trajectory`.
 */
import { readFileSync } from "node:fs";
import { gunzipSync, gzipSync } from "node:zlib";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { Client } from "../support/client";
import { testDb } from "../support/db";
import { isFinished, runCli, waitForRun, workerPool } from "../support/worker";

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));

let db: Knex;
let modeler: Client;
let versionId: string;
const workers = workerPool();

beforeAll(async () => {
  db = testDb();
  modeler = new Client();
  expect(await modeler.signIn("modeler@sentinel.example", "sentinel-demo")).toBe(true);
  const labId = (await modeler.request("GET", "/api/labs")).json.labs.find((l: any) => l.name === "Soil Sentinel").id;
  const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...ringTimer, name: `Sample cells ${Date.now()}` } });
  expect(c.status, c.text).toBe(201);
  versionId = c.json.version_id;
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db.destroy();
});

const storedCells = async (runId: string): Promise<any[]> =>
  JSON.parse(gunzipSync((await db("run_results").where({ run_id: runId }).first("cells_gz")).cells_gz).toString("utf8"));

describe("sample cells", () => {
  it("the cells route serves the sample cells stored at finalize (tau, ε 0.1: a replay with other options would differ), and replays the others like `cli trajectory`", async () => {
    await workers.start();
    const r = await modeler.request("POST", "/api/runs", { version_id: versionId, method: "tau", tau_epsilon: 0.1, t_end: 100, dt: 1, runs: 12, seed: 77 });
    expect(r.status, r.text).toBe(202);
    const run = await waitForRun(modeler, r.json.id, isFinished);
    expect(run.status).toBe("succeeded");

    const stored = await storedCells(run.id);
    expect(stored.map((c) => c.index)).toEqual([0, 1, 2, 3, 4]);
    const cli = ["examples/ring-timer.circuit.json", "--method", "tau", "--tau-epsilon", "0.1", "--seed", "77", "--t-end", "100", "--dt", "1"];
    for (const i of [0, 4]) {
      const served = await modeler.request("GET", `/api/runs/${run.id}/cells/${i}`);
      expect(served.status).toBe(200);
      expect(served.text).toBe(JSON.stringify(stored[i]));
      // The stored cells are the run's own: what the command line replays from (seed, i).
      expect(stored[i].values).toEqual(runCli(["trajectory", ...cli, "--index", String(i)]).json.values);
      const cut = await modeler.request("GET", `/api/runs/${run.id}/cells/${i}?species=B,A&every=10`);
      expect(cut.json.species).toEqual(["B", "A"]);
      expect(cut.json.times).toEqual(stored[i].times.filter((_: number, g: number) => g % 10 === 0));
      expect(cut.json.values.A).toEqual(stored[i].values.A.filter((_: number, g: number) => g % 10 === 0));
    }
    // A cell that is not stored is replayed with the run's options.
    const seven = await modeler.request("GET", `/api/runs/${run.id}/cells/7`);
    expect(seven.status).toBe(200);
    expect(seven.json.values).toEqual(runCli(["trajectory", ...cli, "--index", "7"]).json.values);

    // Served from storage, not replayed: a stored cell changed in the database is what comes back.
    const marked = stored.map((c) => (c.index === 2 ? { ...c, events: -1, values: { ...c.values, A: c.values.A.map(() => 4242) } } : c));
    await db("run_results").where({ run_id: run.id }).update({ cells_gz: gzipSync(Buffer.from(JSON.stringify(marked))) });
    const two = await modeler.request("GET", `/api/runs/${run.id}/cells/2`);
    expect(two.json.events).toBe(-1);
    expect(new Set(two.json.values.A)).toEqual(new Set([4242]));
  });
});
