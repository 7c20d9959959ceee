import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { workerPool } from "../support/worker";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
let reviewer: Client;
let outsider: Client;
let bdVersion: string;
const workers = workerPool();
const worker = () => workers.start();

async function create(body: Record<string, unknown>, client = owner.client) {
  return client.request("POST", "/api/comparisons", { lab_id: owner.labId, name: `Comparison ${Date.now()}`, ...body });
}

async function waitForComparison(id: string, done: (c: any) => boolean, timeoutMs = 120_000) {
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
const count = async () => Number((await db("comparisons").count("* as n").first())!.n);

beforeAll(async () => {
  db = testDb();
  owner = await newUser("cmp-owner");
  const r = await newUser("cmp-reviewer");
  reviewer = r.client;
  outsider = (await newUser("cmp-outsider")).client;
  expect((await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: r.email, role: "reviewer" })).status).toBe(201);
  const c = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: birthDeath });
  expect(c.status, c.text).toBe(201);
  bdVersion = c.json.version_id;
});

afterEach(async () => {
  await workers.killAll();
});

afterAll(async () => {
  await db("runs").where({ lab_id: owner.labId }).whereIn("status", ["queued", "running"]).update({ status: "cancelled" });
  await db.destroy();
});

describe("a comparison through the API and the worker", () => {
  it("launching a comparison of a circuit whose rate reads t is a 422 naming the reaction, and stores nothing", async () => {
    const timed = {
      format: "burstwise.circuit/1", name: `Timed ${Date.now()}`, units: { time: "min", amount: "molecules" },
      species: [{ id: "A", initial: 0 }], parameters: { k: 10, g: 0.1 },
      reactions: [
        { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
        { id: "make", products: { A: 1 }, rate: { law: "expression", expression: "k * piecewise(1, t < 50, 0.2)" } },
      ],
    };
    const v = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: timed });
    expect(v.status, v.text).toBe(201);
    const before = await count();
    const r = await create({ sweep: { version_id: v.json.version_id, axes: [{ parameter: "k", scale: "list", values: [5, 10] }] }, settings: { t_end: 100, dt: 5, runs: 10 }, launch: true });
    expect(r.status, r.text).toBe(422);
    expect(r.json.error).toBe("reactions[1].rate.expression: depends on time t; stochastic runs need rates that depend on the state only (use a schedule for a timed change)");
    expect(await count()).toBe(before);
  });

  it("a sweep of a step's time: each design's schedule fires at its t_on, and the mean-field trace steps there; an override of -5 is refused naming schedule[0].at", async () => {
    // The induction step of examples/two-stage-reporter-induction with its time as a parameter.
    const induced = JSON.parse(readFileSync("examples/two-stage-reporter-induction.circuit.json", "utf8"));
    const timed = { ...induced, name: `Induction at t_on ${Date.now()}`, parameters: { ...induced.parameters, t_on: 100 }, schedule: [{ at: "t_on", set: { km: 2 } }] };
    const v = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: timed });
    expect(v.status, v.text).toBe(201);
    const before = await count();
    const bad = await create({ designs: [{ version_id: v.json.version_id }, { version_id: v.json.version_id, overrides: { t_on: -5 } }], settings: { t_end: 200, dt: 5, runs: 20 } });
    expect(bad.status, bad.text).toBe(422);
    expect(bad.json.error).toMatch(/^designs\[1\]\.overrides: schedule\[0\]\.at: must be >= 0 \(parameter "t_on" is -5\)|schedule\[0\]\.at: must be >= 0 \(parameter "t_on" is -5\)/);
    expect(await count()).toBe(before);
    const badRun = await owner.client.request("POST", "/api/runs", { version_id: v.json.version_id, method: "ssa", t_end: 200, dt: 5, runs: 10, overrides: { t_on: -5 } });
    expect(badRun.status, badRun.text).toBe(422);
    expect(badRun.json.error).toMatch(/schedule\[0\]\.at: must be >= 0 \(parameter "t_on" is -5\)/);

    const sweep = await create({
      sweep: { version_id: v.json.version_id, axes: [{ parameter: "t_on", scale: "list", values: [80, 160] }] },
      settings: { t_end: 200, dt: 5, runs: 20, burn_in: 0, seed: 3 }, launch: true,
    });
    expect(sweep.status, sweep.text).toBe(201);
    await worker();
    const c = await waitForComparison(sweep.json.id, ended);
    expect(c.status, c.error).toBe("succeeded");
    // The linear cascade's closed-form relaxation after km steps 0.2 → 2 at t_on (see
    // tests/ssa/schedule.test.ts): P(t) = P1 + (P0 − P1)e^(−gp τ) + kp ΔM/(gp − gm)(e^(−gm τ) − e^(−gp τ)).
    const [gm, kp, gp] = [0.2, 2, 0.02];
    const P = (t: number, tOn: number) => {
      if (t <= tOn) return 100;
      const tau = t - tOn;
      const [M0, M1] = [1, 10];
      return 1000 + (100 - 1000) * Math.exp(-gp * tau) + ((kp * (M0 - M1)) / (gp - gm)) * (Math.exp(-gm * tau) - Math.exp(-gp * tau));
    };
    for (const [i, tOn] of [80, 160].entries()) {
      const summary = (await owner.client.request("GET", `/api/runs/${c.designs[i].run.id}/summary`)).json;
      expect(summary.schedule[0]).toEqual({ index: 0, at: tOn, set: { km: 2 }, cells: 20, of: 20 });
      const g = summary.times.indexOf(120);
      expect(Math.abs(summary.trace.P[g] - P(120, tOn)) / P(120, tOn), `t_on = ${tOn}`).toBeLessThan(1e-5);
    }
  });

  it("a log sweep of birth–death's production rate: each CV interval covers 1/√mean (Poisson), CV falls with the mean, B less noisy than A is significant", async () => {
    // k = 5, 20, 80 with γ = 0.5: stationary Poisson with mean k/γ = 10, 40, 160, so CV = 1/√(k/γ) and
    // Fano = 1 (textbook; van Kampen). Burn-in 20 min is 10 relaxation times 1/γ.
    const sweep = await create({
      sweep: { version_id: bdVersion, overrides: { g: 0.5 }, axes: [{ parameter: "k", scale: "log", from: 5, to: 80, points: 3 }] },
      settings: { t_end: 200, dt: 1, runs: 200, burn_in: 20, seed: 11 }, launch: true,
    });
    expect(sweep.status, sweep.text).toBe(201);
    expect(sweep.json.designs).toBe(3);
    // Common random numbers: both designs draw the same streams, so identical designs give identical cells.
    const twins = await create({
      designs: [{ version_id: bdVersion, label: "Original" }, { version_id: bdVersion, label: "Copy" }],
      settings: { t_end: 100, dt: 1, runs: 60, burn_in: 20, seed: 5, common_seed: true }, launch: true,
    });
    expect(twins.status, twins.text).toBe(201);
    await worker();
    const c = await waitForComparison(sweep.json.id, ended);
    expect(c.status, c.error).toBe("succeeded");
    expect(c.progress).toBe(1);
    expect(c.designs.map((d: any) => d.label)).toEqual(["k = 5", "k = 20", "k = 80"]);
    expect(c.designs.map((d: any) => d.run.seed)).toEqual([11, 12, 13]);

    const r = c.results;
    expect(r).toMatchObject({ level: 0.95, replicates: 2000, bootstrap_seed: 11, amount_unit: "molecules" });
    const cvs: number[] = [];
    for (const d of r.designs) {
      const mean = d.values.k / 0.5;
      const x = d.species[0];
      expect(x.species).toBe("X");
      expect(x.cv.lo, d.label).toBeLessThanOrEqual(1 / Math.sqrt(mean));
      expect(x.cv.hi, d.label).toBeGreaterThanOrEqual(1 / Math.sqrt(mean));
      expect(x.fano.lo, d.label).toBeLessThanOrEqual(1);
      expect(x.fano.hi, d.label).toBeGreaterThanOrEqual(1);
      expect(x.mean.lo, d.label).toBeLessThanOrEqual(mean);
      expect(x.mean.hi, d.label).toBeGreaterThanOrEqual(mean);
      expect(x.lna_cv / (1 / Math.sqrt(mean))).toBeCloseTo(1, 6); // the LNA is exact for a linear network
      expect(x.period_cv).toBeNull(); // birth–death has no rhythm
      cvs.push(x.cv.value);
    }
    expect(cvs[0]).toBeGreaterThan(cvs[1]!);
    expect(cvs[1]).toBeGreaterThan(cvs[2]!);
    expect(r.lna_curve.points.length).toBeGreaterThan(20);
    expect(r.lna_curve.scale).toBe("log");

    // The reviewer asks whether k = 80 is less noisy than k = 5: yes, and the answer is reproducible.
    const [a, , b] = c.designs;
    const q = `/api/comparisons/${c.id}/test?a=${a.id}&b=${b.id}&species=X`;
    const t = await reviewer.request("GET", q);
    expect(t.status, t.text).toBe(200);
    expect(t.json.cv.significant).toBe(true);
    expect(t.json.cv.hi).toBeLessThan(0);
    expect(t.json.paired).toBe(false);
    expect(t.json.period_cv).toBeNull();
    expect(t.json.caveat).toMatch(/model/);
    expect((await reviewer.request("GET", q)).json).toEqual(t.json);
    expect((await reviewer.request("GET", `/api/comparisons/${c.id}/test?a=${a.id}&b=${b.id}&species=Y`)).json.error).toMatch(/^species: /);
    expect((await reviewer.request("GET", `/api/comparisons/${c.id}/test?a=${a.id}&b=${a.id}&species=X`)).json.error).toMatch(/^b: /);

    // The noise table as CSV: a header and one row per design and species.
    const csv = await reviewer.request("GET", `/api/comparisons/${c.id}/csv`);
    expect(csv.status).toBe(200);
    const lines = csv.text.trim().split("\r\n");
    expect(lines).toHaveLength(4);
    const header = lines[0]!.split(",");
    const row = lines[3]!.split(",");
    expect(row[header.indexOf("design")]).toBe("k = 80");
    expect(Number(row[header.indexOf("cv_lo")])).toBe(r.designs[2].species[0].cv.lo);
    expect(Number(row[header.indexOf("cv")])).toBe(r.designs[2].species[0].cv.value);

    const bands = await reviewer.request("GET", `/api/comparisons/${c.id}/bands?species=X&points=50`);
    expect(bands.status).toBe(200);
    expect(bands.json.designs).toHaveLength(3);
    expect(bands.json.designs[0].times.length).toBeLessThanOrEqual(52);
    expect(bands.json.designs[0].p95.length).toBe(bands.json.designs[0].times.length);

    // Reading again changes nothing (the results were computed once and stored).
    expect((await owner.client.request("GET", `/api/comparisons/${c.id}`)).json.results.computed_at).toBe(r.computed_at);
    expect((await outsider.request("GET", `/api/comparisons/${c.id}`)).status).toBe(404);
    expect((await outsider.request("GET", q)).status).toBe(404);

    const tw = await waitForComparison(twins.json.id, ended);
    expect(tw.status, tw.error).toBe("succeeded");
    expect(tw.designs[0].run.seed).toBe(tw.designs[1].run.seed);
    const same = await owner.client.request("GET", `/api/comparisons/${tw.id}/test?a=${tw.designs[0].id}&b=${tw.designs[1].id}&species=X`);
    expect(same.json).toMatchObject({ paired: true, cv: { difference: 0, p_value: 1, significant: false } });
  });

  it("a design run that fails marks the comparison failed with the reason and stops the other designs", async () => {
    const runaway = {
      format: "burstwise.circuit/1", name: `Runaway ${Date.now()}`, units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }], parameters: { k: 1e9 },
      reactions: [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }, { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: 1 } }],
    };
    const rc = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: runaway });
    const c = await create({
      designs: [{ version_id: rc.json.version_id, label: "Runaway" }, { version_id: bdVersion, label: "Slow", overrides: { k: 2000, g: 1 } }],
      // 10 cells: the queue charges a runaway cell its full event cap (1e8), so 2,000 of them would be over the budget.
      settings: { t_end: 2000, dt: 1, runs: 10, seed: 1 }, launch: true,
    });
    expect(c.status, c.text).toBe(201);
    await worker();
    const done = await waitForComparison(c.json.id, ended, 150_000);
    expect(done.status).toBe("failed");
    expect(done.error).toMatch(/^design "Runaway": run #\d+ failed: .*event/i);
    const slow = done.designs[1].run;
    await expect.poll(async () => (await owner.client.request("GET", `/api/runs/${slow.id}`)).json.status, { timeout: 10_000 }).toMatch(/cancelled|succeeded/);
  });
});

describe("launch, cancel and the queue limit (no worker)", () => {
  it("cancelling one design's run from Runs fails the comparison on its next read; Cancel stops every run; Run again starts afresh", async () => {
    const c = await create({ designs: [{ version_id: bdVersion }, { version_id: bdVersion, overrides: { k: 20 } }], settings: { t_end: 50, dt: 1, runs: 20 }, launch: true });
    expect(c.status, c.text).toBe(201);
    const first = (await owner.client.request("GET", `/api/comparisons/${c.json.id}`)).json;
    expect(first.status).toBe("running");
    expect(first.designs.map((d: any) => d.label)).toEqual([`${birthDeath.name} v1`, `${birthDeath.name} v1 (k = 20)`]);
    // Each design run is in the audit trail as a launched run naming the comparison.
    const audit = (await owner.client.request("GET", `/api/labs/${owner.labId}/audit?action=run.launched`)).json.events;
    const mine = audit.filter((e: any) => e.details.comparison_id === c.json.id);
    expect(mine.map((e: any) => e.target_id).sort()).toEqual(first.designs.map((d: any) => d.run.id).sort());
    expect((await owner.client.request("POST", `/api/runs/${first.designs[0].run.id}/cancel`)).status).toBe(200);
    const after = (await owner.client.request("GET", `/api/comparisons/${c.json.id}`)).json;
    expect(after.status).toBe("failed");
    expect(after.error).toMatch(/was cancelled/);
    expect((await owner.client.request("GET", `/api/runs/${first.designs[1].run.id}`)).json.status).toBe("cancelled");

    const again = await owner.client.request("POST", `/api/comparisons/${c.json.id}/launch`);
    expect(again.status, again.text).toBe(202);
    expect(again.json.runs).toHaveLength(2);
    expect(again.json.runs).not.toContain(first.designs[0].run.id);
    expect((await reviewer.request("POST", `/api/comparisons/${c.json.id}/cancel`)).status).toBe(403);
    const cancelled = await owner.client.request("POST", `/api/comparisons/${c.json.id}/cancel`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.json.status).toBe("cancelled");
    expect(cancelled.json.designs.every((d: any) => d.run.status === "cancelled")).toBe(true);
    expect((await owner.client.request("POST", `/api/comparisons/${c.json.id}/cancel`)).status).toBe(409);
  });

  it("a comparison of 24 designs counts as 24 runs toward the lab's 100 queued runs", async () => {
    const crowd = await newUser("cmp-crowd");
    const v = (await crowd.client.request("POST", "/api/circuits", { lab_id: crowd.labId, circuit: birthDeath })).json.version_id;
    const values = Array.from({ length: 24 }, (_, i) => i + 1);
    const c = await crowd.client.request("POST", "/api/comparisons", {
      lab_id: crowd.labId, name: "Crowd", sweep: { version_id: v, axes: [{ parameter: "k", scale: "list", values }] }, settings: { t_end: 10, dt: 1, runs: 10 }, launch: true,
    });
    expect(c.status, c.text).toBe(201);
    expect(c.json.runs).toHaveLength(24);
    expect(c.json.cost.cell_events).toBeGreaterThan(0);
    for (let i = 0; i < 75; i++) expect((await crowd.client.request("POST", "/api/runs", { version_id: v, method: "ssa", t_end: 10, dt: 1 })).status).toBe(202);
    // 99 queued: one more run fits, a comparison of two designs does not.
    const another = await crowd.client.request("POST", "/api/comparisons", {
      lab_id: crowd.labId, name: "One more", designs: [{ version_id: v }, { version_id: v }], settings: { t_end: 10, dt: 1, runs: 10 }, launch: true,
    });
    expect(another.status, another.text).toBe(429);
    expect(another.json.error).toMatch(/^runs: the lab would have more than 100 runs queued or running \(queued 99, this comparison 2;/);
    expect(await db("comparisons").where({ lab_id: crowd.labId, name: "One more" }).first()).toBeUndefined(); // refused before anything was stored
    expect((await crowd.client.request("POST", "/api/runs", { version_id: v, method: "ssa", t_end: 10, dt: 1 })).status).toBe(202);
    const over = await crowd.client.request("POST", "/api/runs", { version_id: v, method: "ssa", t_end: 10, dt: 1 });
    expect(over.status).toBe(429);
    expect(over.json.error).toMatch(/^runs: /);
    await db("runs").where({ lab_id: crowd.labId }).whereIn("status", ["queued", "running"]).update({ status: "cancelled" });
  });
});

describe("bad input is a clear 4xx naming the field, and stores nothing", () => {
  const settings = { t_end: 100, dt: 1, runs: 50 };
  const axis = (a: Record<string, unknown>) => ({ sweep: { version_id: "BD", axes: [{ parameter: "k", ...a }] }, settings });
  const cases: [string, Record<string, unknown>, number, RegExp][] = [
    ["a log range from 0", axis({ scale: "log", from: 0, to: 10, points: 3 }), 422, /^sweep\.axes\[0\]\.from: must be > 0 on a log range/],
    ["a log range to a negative bound", axis({ scale: "log", from: 1, to: -10, points: 3 }), 422, /^sweep\.axes\[0\]\.to: must be > 0 on a log range/],
    ["25 designs listed", { designs: Array.from({ length: 25 }, () => ({ version_id: "BD" })), settings }, 422, /^designs: gives 25 designs; at most 24 per comparison/],
    ["a 5 × 5 grid", { sweep: { version_id: "BD", axes: [{ parameter: "k", scale: "linear", from: 1, to: 5, points: 5 }, { parameter: "g", scale: "linear", from: 0.1, to: 0.5, points: 5 }] }, settings }, 422, /^sweep\.axes: gives 25 designs; at most 24/],
    ["an unknown parameter in a sweep", { sweep: { version_id: "BD", axes: [{ parameter: "kk", scale: "list", values: [1, 2] }] }, settings }, 422, /^sweep\.axes\[0\]\.parameter: unknown parameter "kk" \(the circuit has (k, g|g, k)\)/],
    ["an unknown parameter in a design's overrides", { designs: [{ version_id: "BD" }, { version_id: "BD", overrides: { Kc: 3 } }], settings }, 422, /^designs\[1\]\.overrides\.Kc: unknown parameter "Kc"/],
    ["a sweep value outside a parameter's bounds", axis({ scale: "linear", from: -5, to: 5, points: 3 }), 422, /^sweep\.axes: k = -5 gives .*after overrides/],
    ["a single design", { designs: [{ version_id: "BD" }], settings }, 422, /^designs: gives 1 design; a comparison needs at least 2/],
    ["designs and a sweep at once", { designs: [{ version_id: "BD" }, { version_id: "BD" }], sweep: { version_id: "BD", axes: [{ parameter: "k", scale: "list", values: [1, 2] }] }, settings }, 422, /^designs: send exactly one of designs or sweep/],
    ["too few cells for intervals", { designs: [{ version_id: "BD" }, { version_id: "BD" }], settings: { ...settings, runs: 3 } }, 422, /^settings\.runs: must be >= 10/],
    ["a version of another lab", { designs: [{ version_id: "OTHER" }, { version_id: "BD" }], settings }, 422, /^designs\[0\]\.version_id: /],
  ];
  let otherVersion = "";
  beforeAll(async () => {
    // A version in a lab the owner also belongs to, but not the comparison's lab.
    const other = await newUser("cmp-other");
    otherVersion = (await other.client.request("POST", "/api/circuits", { lab_id: other.labId, circuit: ringTimer })).json.version_id;
    await other.client.request("POST", `/api/labs/${other.labId}/members`, { email: owner.email, role: "modeler" });
  });
  it.each(cases)("%s is a %s", async (_label, body, status, message) => {
    const text = JSON.stringify(body).replaceAll('"BD"', JSON.stringify(bdVersion)).replaceAll('"OTHER"', JSON.stringify(otherVersion));
    const before = await count();
    const r = await create(JSON.parse(text));
    expect(r.status, r.text).toBe(status);
    expect(r.json.error).toMatch(message);
    expect(await count()).toBe(before);
  });

  it("a reviewer may read but not create or launch (403); a stranger gets 404", async () => {
    const draft = await create({ designs: [{ version_id: bdVersion }, { version_id: bdVersion }], settings });
    expect(draft.status).toBe(201);
    const r = await reviewer.request("POST", "/api/comparisons", { lab_id: owner.labId, name: "No", designs: [{ version_id: bdVersion }, { version_id: bdVersion }], settings });
    expect(r.status).toBe(403);
    expect(r.json.error).toMatch(/^role: /);
    expect((await reviewer.request("POST", `/api/comparisons/${draft.json.id}/launch`)).status).toBe(403);
    expect((await reviewer.request("DELETE", `/api/comparisons/${draft.json.id}`)).status).toBe(403);
    expect((await reviewer.request("GET", `/api/comparisons/${draft.json.id}`)).json.status).toBe("draft");
    expect((await reviewer.request("GET", `/api/comparisons?lab_id=${owner.labId}`)).json.comparisons.some((c: any) => c.id === draft.json.id)).toBe(true);
    expect((await outsider.request("POST", `/api/comparisons/${draft.json.id}/launch`)).status).toBe(404);
    expect((await outsider.request("GET", `/api/comparisons?lab_id=${owner.labId}`)).status).toBe(404);
    expect((await owner.client.request("DELETE", `/api/comparisons/${draft.json.id}`)).status).toBe(204);
    expect((await owner.client.request("GET", `/api/comparisons/${draft.json.id}`)).status).toBe(404);
  });
});

describe("the demo lab", () => {
  it("the seed put the four ring-timer designs of PRODUCT.md in one comparison of the Soil Sentinel lab, launched", async () => {
    const demo = new Client();
    expect(await demo.signIn("reviewer@sentinel.example", "sentinel-demo")).toBe(true);
    const lab = (await demo.request("GET", "/api/labs")).json.labs.find((l: any) => l.name === "Soil Sentinel");
    const list = (await demo.request("GET", `/api/comparisons?lab_id=${lab.id}`)).json.comparisons;
    const c = list.find((x: any) => /Ring timer/.test(x.name));
    expect(c).toBeTruthy();
    const full = (await demo.request("GET", `/api/comparisons/${c.id}`)).json;
    expect(full.designs.map((d: any) => d.label)).toEqual(["Baseline (n = 4)", "Higher cooperativity (n = 6)", "Stronger degradation tag (g = 0.3/min)", "5× molecules (5 fL)"]);
    expect(full.status).not.toBe("draft");
    expect(full.common_seed).toBe(true);
  });
});
