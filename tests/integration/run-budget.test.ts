import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { newUser, type Client } from "../support/client";
import { testDb } from "../support/db";

// Queued work is bounded by expected cost (cell-events = cells × (expected events per cell + grid
// points)) per lab and per user, whatever the budget is set to: every test reads the budget and
// the cost of one cell from the server's own answers and sizes its runs from them. No worker runs
// in this file, so nothing that is queued here finishes and frees room by itself.

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
const SETTINGS = { method: "ssa", t_end: 3000, dt: 1 } as const;

type User = Awaited<ReturnType<typeof newUser>>;
let db: Knex;
const users: User[] = [];

async function signUp(prefix: string): Promise<User & { versionId: string }> {
  const u = await newUser(prefix);
  users.push(u);
  const c = await u.client.request("POST", "/api/circuits", { lab_id: u.labId, circuit: { ...ringTimer, name: `Ring timer ${prefix}` } });
  expect(c.status, c.text).toBe(201);
  return { ...u, versionId: c.json.version_id };
}

function launch(client: Client, versionId: string, runs: number, extra: Record<string, unknown> = {}) {
  return client.request("POST", "/api/runs", { version_id: versionId, ...SETTINGS, runs, ...extra });
}

/** The budget and the cost of one cell of SETTINGS (+ `extra`), from a 1-cell run (cancelled at once, so it holds no room). */
async function probe(u: User & { versionId: string }, extra: Record<string, unknown> = {}): Promise<{ budget: number; userBudget: number; perCell: number }> {
  const r = await launch(u.client, u.versionId, 1, extra);
  expect(r.status, r.text).toBe(202);
  expect((await u.client.request("POST", `/api/runs/${r.json.id}/cancel`)).status).toBe(200);
  const { cell_events: perCell, lab_budget: budget, user_budget: userBudget } = r.json.cost;
  expect(perCell).toBeGreaterThan(100); // at least one per grid point, plus the events
  return { budget, userBudget, perCell };
}

/** Cells for a run that costs about `share` of the budget (within the 20,000-cell limit). */
function cellsFor(share: number, p: { budget: number; perCell: number }): number {
  const cells = Math.floor((share * p.budget) / p.perCell);
  expect(cells, "the budget is too large for this test's circuit").toBeLessThanOrEqual(20_000);
  expect(cells).toBeGreaterThanOrEqual(1);
  return cells;
}

const storedRuns = async (where: Record<string, string>) => Number((await db("runs").where(where).whereIn("status", ["queued", "running"]).count("* as n").first())!.n);
const labCost = async (labId: string) => Number((await db("runs").where({ lab_id: labId }).whereIn("status", ["queued", "running"]).sum("cost as s").first())!.s ?? 0);

beforeAll(() => {
  db = testDb();
});

afterAll(async () => {
  // Nothing launched here may be left for a later file's worker to compute.
  for (const u of users) await db("runs").where({ created_by: u.userId }).whereIn("status", ["queued", "running"]).update({ status: "cancelled" });
  await db.destroy();
});

describe("queued work per lab and per user is bounded by its expected cost", () => {
  it("a lab's queued runs stop at the lab's budget, whoever launches them: the run over it is a 429 naming the budget, and nothing is stored", async () => {
    const owner = await signUp("budget-owner");
    const member = await newUser("budget-member");
    users.push(member);
    expect((await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: member.email, role: "modeler" })).status).toBe(201);
    const p = await probe(owner);
    const cells = cellsFor(0.3, p); // three runs fit (0.9 of the budget), a fourth does not
    const first = await launch(owner.client, owner.versionId, cells);
    expect(first.status, first.text).toBe(202);
    const cost = first.json.cost.cell_events;
    expect(cost).toBeCloseTo(cells * p.perCell, 0);
    expect(first.json.cost.lab_queued).toBeCloseTo(cost, 0);
    // Two more by another member: the lab's budget counts every member's runs.
    for (let i = 0; i < 2; i++) expect((await launch(member.client, owner.versionId, cells)).status).toBe(202);
    expect(await storedRuns({ lab_id: owner.labId })).toBe(3);

    // The member's own queue holds 0.6 of a budget; the lab's holds 0.9, and one more run would pass it.
    const over = await launch(member.client, owner.versionId, cells);
    expect(over.status, over.text).toBe(429);
    expect(over.json.error).toMatch(/^runs: queued work would exceed the lab's budget of [\d.]+ \w+ cell-events \(queued [\d.]+ \w+ cell-events, this run [\d.]+ \w+ cell-events\); wait for runs to finish or make this one smaller$/);
    expect(await storedRuns({ lab_id: owner.labId })).toBe(3);
    expect(await labCost(owner.labId)).toBeLessThanOrEqual(p.budget);

    // A run small enough for what is left still fits; cancelling one frees its share for another.
    expect((await launch(member.client, owner.versionId, cellsFor(0.05, p))).status).toBe(202);
    const r = (await owner.client.request("GET", `/api/runs?lab_id=${owner.labId}&status=queued`)).json.runs;
    expect((await owner.client.request("POST", `/api/runs/${r.find((x: any) => x.settings.runs === cells).id}/cancel`)).status).toBe(200);
    expect((await launch(member.client, owner.versionId, cells)).status).toBe(202);
  });

  it("one user's queued runs stop at the user's budget across two labs, while the other lab's owner may still launch", async () => {
    const worker = await signUp("budget-multi");
    const other = await signUp("budget-second-lab");
    expect((await other.client.request("POST", `/api/labs/${other.labId}/members`, { email: worker.email, role: "modeler" })).status).toBe(201);
    const p = await probe(worker);
    expect(p.userBudget).toBeLessThanOrEqual(p.budget); // else a second lab would not be what stops the user first
    const cells = Math.floor((0.45 * p.userBudget) / p.perCell);
    for (let i = 0; i < 2; i++) expect((await launch(worker.client, worker.versionId, cells)).status).toBe(202);

    // The second lab is empty, but the user's own queue (0.9 of a budget) has no room for another run.
    const over = await launch(worker.client, other.versionId, cells);
    expect(over.status, over.text).toBe(429);
    expect(over.json.error).toMatch(/^runs: queued work would exceed your budget of [\d.]+ \w+ cell-events over all your labs \(queued [\d.]+ \w+ cell-events, this run [\d.]+ \w+ cell-events\); wait for runs to finish or make this one smaller$/);
    expect(await storedRuns({ lab_id: other.labId })).toBe(0);
    const theirs = await launch(other.client, other.versionId, cells);
    expect(theirs.status, theirs.text).toBe(202);
    expect(theirs.json.cost.user_queued).toBeCloseTo(theirs.json.cost.cell_events, 0);
  });

  it("a single run bigger than the budget is a 422 naming runs (or t_end when one cell is too much), and nothing is stored", async () => {
    const u = await signUp("budget-huge");
    const long = { t_end: 30_000, dt: 10 };
    const p = await probe(u, long);
    const r = await launch(u.client, u.versionId, cellsFor(1.5, p), long);
    expect(r.status, r.text).toBe(422);
    expect(r.json.error).toMatch(/^runs: this run is expected to cost [\d.]+ \w+ cell-events \([\d.]+ \w+ cell-events per cell\), more than the budget of [\d.]+ \w+ cell-events a lab or a user may have queued; use fewer cells, a shorter t_end or a larger dt$/);
    // A runaway production rate: every cell would hit the engine's event cap long before t_end.
    const runaway = { ...ringTimer, name: "Runaway ring", parameters: { ...ringTimer.parameters, vA: 1e9 } };
    const v = (await u.client.request("POST", "/api/circuits", { lab_id: u.labId, circuit: runaway })).json.version_id;
    const one = await u.client.request("POST", "/api/runs", { version_id: v, ...SETTINGS, t_end: 1e5, dt: 1, runs: 20_000 });
    expect(one.status, one.text).toBe(422);
    expect(one.json.error).toMatch(/^(runs|t_end): this run is expected to cost/);
    expect(await storedRuns({ lab_id: u.labId })).toBe(0);
  });

  it("a comparison counts by all its designs: 24 designs × 20,000 cells are refused though one such ensemble fits, and nothing is stored", async () => {
    const u = await signUp("budget-cmp");
    const p = await probe(u);
    const values = Array.from({ length: 24 }, (_, i) => 10 + i);
    const body = (name: string, runs: number, launchNow = true) => ({
      lab_id: u.labId, name, sweep: { version_id: u.versionId, axes: [{ parameter: "K", scale: "list", values }] },
      settings: { t_end: 200, dt: 1, runs }, launch: launchNow,
    });
    // One design of these settings fits the budget on its own.
    const single = await launch(u.client, u.versionId, 20_000, { t_end: 200 });
    expect(single.status, single.text).toBe(202);
    const perDesign = single.json.cost.cell_events;
    expect((await u.client.request("POST", `/api/runs/${single.json.id}/cancel`)).status).toBe(200);
    expect(24 * perDesign, "24 designs must be over the budget for this test").toBeGreaterThan(p.budget);

    const huge = await u.client.request("POST", "/api/comparisons", body("Huge sweep", 20_000));
    expect(huge.status, huge.text).toBe(422);
    expect(huge.json.error).toMatch(/^settings\.runs: this comparison of 24 designs is expected to cost [\d.]+ \w+ cell-events .*more than the budget of [\d.]+ \w+ cell-events/);
    expect(await db("comparisons").where({ lab_id: u.labId }).first()).toBeUndefined();
    expect(await storedRuns({ lab_id: u.labId })).toBe(0);

    // Sized to fit alone, but not beside a run that holds most of the budget: a 429, counted by its 24 designs.
    const cells = Math.max(10, Math.floor((0.5 * p.budget) / 24 / (perDesign / 20_000)));
    expect((await launch(u.client, u.versionId, cellsFor(0.7, p))).status).toBe(202);
    const crowd = await u.client.request("POST", "/api/comparisons", body("Crowded sweep", cells));
    expect(crowd.status, crowd.text).toBe(429);
    expect(crowd.json.error).toMatch(/^runs: queued work would exceed the lab's budget .*this comparison [\d.]+ \w+ cell-events\)/);
    expect(await db("comparisons").where({ lab_id: u.labId }).first()).toBeUndefined();
    expect(await storedRuns({ lab_id: u.labId })).toBe(1);

    // A draft of it launched later is refused the same way and stays a draft with no runs.
    const draft = await u.client.request("POST", "/api/comparisons", body("Draft sweep", cells, false));
    expect(draft.status, draft.text).toBe(201);
    const launched = await u.client.request("POST", `/api/comparisons/${draft.json.id}/launch`);
    expect(launched.status, launched.text).toBe(429);
    expect(launched.json.error).toMatch(/^runs: queued work would exceed/);
    expect((await db("comparisons").where({ id: draft.json.id }).first()).status).toBe("draft");
    expect(await storedRuns({ lab_id: u.labId })).toBe(1);
  });

  it("many launches at once never queue more than the budget: exactly as many as fit are accepted", async () => {
    const u = await signUp("budget-race");
    const p = await probe(u);
    const cells = cellsFor(0.24, p); // four fit, a fifth does not
    const fit = Math.floor(p.budget / (cells * p.perCell));
    expect(fit).toBe(4);
    const answers = await Promise.all(Array.from({ length: 16 }, () => launch(u.client, u.versionId, cells)));
    const statuses = answers.map((a) => a.status).sort();
    expect(statuses.filter((s) => s === 202)).toHaveLength(fit);
    expect(statuses.filter((s) => s === 429)).toHaveLength(16 - fit);
    expect(await storedRuns({ lab_id: u.labId })).toBe(fit);
    expect(await labCost(u.labId)).toBeLessThanOrEqual(p.budget);
  });
});
