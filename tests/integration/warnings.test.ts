// Warnings travel with results through the API (issue 12 item 1): a version made from SBML keeps
// its import warnings, and its analysis, its runs (the run, its summary, its replayed cells) carry
// them, import warnings first; a circuit file's results carry "warnings": [].
import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { newUser, type Client } from "../support/client";
import { testDb } from "../support/db";
import { isFinished, runCli, waitForRun, workerPool } from "../support/worker";

const SBML_FILE = "tests/fixtures/sbml-l3v2-no-units.xml";
const sbml = readFileSync(SBML_FILE, "utf8");
const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
const IMPORT_WARNINGS = [
  { code: "sbml-no-time-unit", message: "no time unit declared; read as seconds", field: "units.time" },
  { code: "sbml-no-substance-unit", message: "no substance unit declared; amounts read as molecules", field: "units.amount" },
];

let db: Knex;
let me: Client;
let labId: string;
let sbmlCircuitId: string;
let sbmlVersionId: string;
let plainVersionId: string;
const workers = workerPool();

beforeAll(async () => {
  db = testDb();
  const u = await newUser("warnings");
  me = u.client;
  labId = u.labId;
  const made = await me.request("POST", "/api/circuits", { lab_id: labId, sbml });
  expect(made.status, made.text).toBe(201);
  expect(made.json.warnings).toEqual(IMPORT_WARNINGS);
  sbmlCircuitId = made.json.id;
  sbmlVersionId = made.json.version_id;
  const plain = await me.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...birthDeath, name: "Birth-death (circuit file)" } });
  expect(plain.status, plain.text).toBe(201);
  expect(plain.json.warnings).toBeUndefined();
  plainVersionId = plain.json.version_id;
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db.destroy();
});

describe("a version made from SBML keeps its import warnings", () => {
  it("GET /api/versions/:id/warnings lists them, the circuit's versions carry them and the version's header counts them", async () => {
    const w = await me.request("GET", `/api/versions/${sbmlVersionId}/warnings`);
    expect(w.status, w.text).toBe(200);
    expect(w.json).toEqual({ version_id: sbmlVersionId, source_format: "sbml", warnings: IMPORT_WARNINGS });
    const c = await me.request("GET", `/api/circuits/${sbmlCircuitId}`);
    expect(c.json.versions[0].warnings).toEqual(IMPORT_WARNINGS);
    const v = await fetch(`${me.baseUrl}/api/versions/${sbmlVersionId}`, { headers: { cookie: me.cookieHeader(), ...(me.address ? { "x-forwarded-for": me.address } : {}) } });
    expect(v.status).toBe(200);
    expect(v.headers.get("x-import-warnings")).toBe("2");
    expect((await v.json()).warnings).toBeUndefined(); // the body stays the circuit file
    const stored = await db("circuit_versions").where({ id: sbmlVersionId }).first("import_warnings");
    expect(stored.import_warnings).toEqual(IMPORT_WARNINGS);
    const none = await me.request("GET", `/api/versions/${plainVersionId}/warnings`);
    expect(none.json.warnings).toEqual([]);
  });

  it("the version's analysis carries them first; a circuit file's analysis has warnings []", async () => {
    const a = await me.request("GET", `/api/versions/${sbmlVersionId}/analysis`);
    expect(a.status, a.text).toBe(200);
    expect(a.json.steady_state.X).toBeCloseTo(8, 6);
    expect(a.json.warnings.slice(0, 2)).toEqual(IMPORT_WARNINGS);
    const p = await me.request("GET", `/api/versions/${plainVersionId}/analysis`);
    expect(p.json.warnings).toEqual([]);
  });
});

describe("runs carry their warnings", () => {
  it("an ensemble of the SBML version: GET /api/runs/:id, its summary and its cells carry the import warnings, as `cli simulate` prints them", async () => {
    await workers.start();
    // t_end 40 leaves a window after 5 relaxation times (2 s each): only the import warnings apply.
    const r = await me.request("POST", "/api/runs", { version_id: sbmlVersionId, method: "ssa", t_end: 40, dt: 1, runs: 30, seed: 11 });
    expect(r.status, r.text).toBe(202);
    const queued = await me.request("GET", `/api/runs/${r.json.id}`);
    expect(queued.json.warnings).toEqual([]); // no summary yet
    const run = await waitForRun(me, r.json.id, isFinished);
    expect(run.status).toBe("succeeded");
    expect(run.warnings).toEqual(IMPORT_WARNINGS);
    const summary = (await me.request("GET", `/api/runs/${r.json.id}/summary`)).json;
    expect(summary.warnings).toEqual(IMPORT_WARNINGS);
    const cell = await me.request("GET", `/api/runs/${r.json.id}/cells/2`);
    expect(cell.status, cell.text).toBe(200);
    expect(cell.json.warnings).toEqual(IMPORT_WARNINGS);
    const stored = await db("run_results").where({ run_id: r.json.id }).first("warnings");
    expect(stored.warnings).toEqual(IMPORT_WARNINGS);
    // Last: the command line blocks this process, and the app may close idle connections meanwhile.
    const cli = runCli(["simulate", SBML_FILE, "--runs", "30", "--seed", "11", "--t-end", "40", "--dt", "1", "--threads", "1"]);
    expect(cli.status, cli.stderr).toBe(0);
    expect(summary.warnings).toEqual(cli.json.warnings);
    expect(summary.stationary).toEqual(cli.json.stationary);
  });

  it("a trace of the SBML version carries them; a run of a circuit file carries warnings []", async () => {
    await workers.start();
    const t = await me.request("POST", "/api/runs", { version_id: sbmlVersionId, method: "ode", t_end: 40, dt: 1 });
    expect(t.status, t.text).toBe(202);
    const p = await me.request("POST", "/api/runs", { version_id: plainVersionId, method: "ssa", t_end: 200, dt: 1, runs: 5, seed: 3 });
    expect(p.status, p.text).toBe(202);
    const trace = await waitForRun(me, t.json.id, isFinished);
    expect(trace.status).toBe("succeeded");
    expect(trace.warnings).toEqual(IMPORT_WARNINGS);
    expect((await me.request("GET", `/api/runs/${t.json.id}/summary`)).json.warnings).toEqual(IMPORT_WARNINGS);
    const plain = await waitForRun(me, p.json.id, isFinished);
    expect(plain.status).toBe("succeeded");
    expect(plain.warnings).toEqual([]);
    expect((await me.request("GET", `/api/runs/${p.json.id}/summary`)).json.warnings).toEqual([]);
  });
});
