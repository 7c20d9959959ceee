import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { startWorker, stopWorker, waitForOutput } from "../support/worker";

const twoStage = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
let modeler: Awaited<ReturnType<typeof newUser>>;
/** What each action touched, to check the trail names it exactly once. */
const expected: { action: string; targetId: string; actor: string | null }[] = [];

async function events(client: Client, query = "") {
  const r = await client.request("GET", `/api/labs/${owner.labId}/audit${query}`);
  expect(r.status, r.text).toBe(200);
  return r.json as { events: { id: string; action: string; actor: string | null; target_type: string; target_id: string; details: Record<string, unknown>; created_at: string }[]; total: number };
}

async function waitFinished(client: Client, runId: string) {
  const until = Date.now() + 60_000;
  for (;;) {
    const r = (await client.request("GET", `/api/runs/${runId}`)).json;
    if (["succeeded", "failed", "cancelled"].includes(r.status)) return r;
    if (Date.now() > until) throw new Error(`run ${runId} stuck`);
    await new Promise((res) => setTimeout(res, 200));
  }
}

beforeAll(async () => {
  db = testDb();
  owner = await newUser("auditor");
  modeler = await newUser("audited");
  const w = startWorker();
  try {
    await waitForOutput(w, /worker ready/);
    const add = await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: modeler.email, role: "reviewer" });
    expect(add.status).toBe(201);
    expected.push({ action: "member.added", targetId: modeler.userId, actor: owner.email });
    expect((await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${modeler.userId}`, { role: "modeler" })).status).toBe(200);
    expected.push({ action: "member.role_changed", targetId: modeler.userId, actor: owner.email });
    // The same role again changes nothing, so it is not recorded.
    expect((await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${modeler.userId}`, { role: "modeler" })).status).toBe(200);
    expect((await owner.client.request("PATCH", `/api/labs/${owner.labId}`, { name: "Audited lab" })).status).toBe(200);
    expected.push({ action: "lab.renamed", targetId: owner.labId, actor: owner.email });

    const c = await modeler.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: twoStage });
    expect(c.status, c.text).toBe(201);
    expected.push({ action: "circuit.created", targetId: c.json.id, actor: modeler.email });
    const v2 = await modeler.client.request("POST", `/api/circuits/${c.json.id}/versions`, { circuit: { ...twoStage, parameters: { ...twoStage.parameters, km: 3 } }, message: "faster transcription" });
    expect(v2.status).toBe(201);
    expected.push({ action: "circuit.version_saved", targetId: c.json.id, actor: modeler.email });
    // Saving an identical circuit makes no version, so no event.
    expect((await modeler.client.request("POST", `/api/circuits/${c.json.id}/versions`, { circuit: twoStage })).status).toBe(200);

    const run = await modeler.client.request("POST", "/api/runs", { version_id: v2.json.version_id, method: "ssa", t_end: 50, dt: 1, runs: 20, seed: 5 });
    expect(run.status).toBe(202);
    expected.push({ action: "run.launched", targetId: run.json.id, actor: modeler.email });
    expect((await waitFinished(modeler.client, run.json.id)).status).toBe("succeeded");
    expected.push({ action: "run.finished", targetId: run.json.id, actor: null });
    await stopWorker(w, "SIGTERM");
    const queued = await modeler.client.request("POST", "/api/runs", { version_id: v2.json.version_id, method: "ssa", t_end: 50, dt: 1, runs: 20 });
    expect((await modeler.client.request("POST", `/api/runs/${queued.json.id}/cancel`)).status).toBe(200);
    expected.push({ action: "run.launched", targetId: queued.json.id, actor: modeler.email }, { action: "run.cancelled", targetId: queued.json.id, actor: modeler.email });
    expect((await owner.client.request("DELETE", `/api/runs/${queued.json.id}`)).status).toBe(204);
    expected.push({ action: "run.deleted", targetId: queued.json.id, actor: owner.email });

    // A comparison of the two versions: created as a draft, launched (two design runs; no worker
    // is running), cancelled with its runs, deleted by the owner.
    const cmp = await modeler.client.request("POST", "/api/comparisons", {
      lab_id: owner.labId, name: "Audit pair", designs: [{ version_id: c.json.version_id }, { version_id: v2.json.version_id }], settings: { t_end: 20, dt: 1, runs: 10 },
    });
    expect(cmp.status, cmp.text).toBe(201);
    expected.push({ action: "comparison.created", targetId: cmp.json.id, actor: modeler.email });
    const launched = await modeler.client.request("POST", `/api/comparisons/${cmp.json.id}/launch`);
    expect(launched.status, launched.text).toBe(202);
    expected.push({ action: "comparison.launched", targetId: cmp.json.id, actor: modeler.email });
    for (const id of launched.json.runs as string[]) expected.push({ action: "run.launched", targetId: id, actor: modeler.email });
    expect((await modeler.client.request("POST", `/api/comparisons/${cmp.json.id}/cancel`)).status).toBe(200);
    expected.push({ action: "comparison.cancelled", targetId: cmp.json.id, actor: modeler.email });
    expect((await owner.client.request("DELETE", `/api/comparisons/${cmp.json.id}`)).status).toBe(204);
    expected.push({ action: "comparison.deleted", targetId: cmp.json.id, actor: owner.email });

    const f = new FormData();
    for (const [k, v] of Object.entries({ lab_id: owner.labId, kind: "snapshot", name: "Audit plate", amount_unit: "molecules" })) f.set(k, v);
    f.set("file", new Blob(["P\n10\n20\n"], { type: "text/csv" }), "plate.csv");
    const ds = await modeler.client.request("POST", "/api/datasets", f);
    expect(ds.status, ds.text).toBe(201);
    expected.push({ action: "dataset.uploaded", targetId: ds.json.id, actor: modeler.email });
    expect((await owner.client.request("DELETE", `/api/datasets/${ds.json.id}`)).status).toBe(204);
    expected.push({ action: "dataset.deleted", targetId: ds.json.id, actor: owner.email });

    const invitee = `audit-invitee-${Date.now()}@test.example`;
    const inv = await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: invitee, role: "reviewer" });
    expect(inv.status).toBe(201);
    expected.push({ action: "invitation.sent", targetId: inv.json.id, actor: owner.email });
    const token = inv.json.accept_url.split("/invite/")[1];
    expect((await new Client().request("POST", `/api/invitations/${token}/accept`, { name: "Ivy", password: "a long enough password" })).status).toBe(201);
    expected.push({ action: "invitation.accepted", targetId: inv.json.id, actor: invitee });
    const inv2 = await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: `audit-no-${Date.now()}@test.example`, role: "modeler" });
    expect((await owner.client.request("DELETE", `/api/labs/${owner.labId}/invitations/${inv2.json.id}`)).status).toBe(204);
    expected.push({ action: "invitation.sent", targetId: inv2.json.id, actor: owner.email }, { action: "invitation.revoked", targetId: inv2.json.id, actor: owner.email });

    const ivy = (await db("users").where({ email: invitee }).first("id")).id;
    expect((await owner.client.request("DELETE", `/api/labs/${owner.labId}/members/${ivy}`)).status).toBe(204);
    expected.push({ action: "member.removed", targetId: String(ivy), actor: owner.email });

    expect((await owner.client.request("DELETE", `/api/circuits/${c.json.id}`)).status).toBe(204);
    expected.push({ action: "circuit.deleted", targetId: c.json.id, actor: owner.email });
  } finally {
    await stopWorker(w, "SIGKILL");
  }
});

afterAll(async () => {
  await db.destroy();
});

describe("the audit trail", () => {
  it("records each action exactly once, with its actor (null: the worker)", async () => {
    const { events: all, total } = await events(owner.client, "?limit=500");
    expect(total).toBe(expected.length);
    const seen = all.map((e) => `${e.action} ${e.target_id} ${e.actor}`).sort();
    expect(seen).toEqual(expected.map((e) => `${e.action} ${e.targetId} ${e.actor}`).sort());
    const kinds = new Set(all.map((e) => e.action));
    for (const a of ["circuit.created", "circuit.version_saved", "circuit.deleted", "run.launched", "run.cancelled", "run.deleted", "run.finished",
      "comparison.created", "comparison.launched", "comparison.cancelled", "comparison.deleted",
      "dataset.uploaded", "dataset.deleted", "invitation.sent", "invitation.accepted", "invitation.revoked", "member.role_changed", "member.removed"]) {
      expect(kinds.has(a), a).toBe(true);
    }
    expect(all.find((e) => e.action === "comparison.cancelled")!.details).toEqual({ name: "Audit pair", kind: "designs", runs_cancelled: 2 });
    expect(all.find((e) => e.action === "comparison.launched")!.details).toMatchObject({ name: "Audit pair", runs: 2 });
    const role = all.find((e) => e.action === "member.role_changed")!;
    expect(role.details).toEqual({ email: modeler.email, from: "reviewer", to: "modeler" });
    expect(all.find((e) => e.action === "run.finished")!.details).toMatchObject({ status: "succeeded", circuit: "Two-stage reporter", version_number: 2 });
  });

  it("filters by action (one, or every action on a subject), by actor, and by dates", async () => {
    const runs = await events(owner.client, "?action=run");
    expect(new Set(runs.events.map((e) => e.action))).toEqual(new Set(["run.launched", "run.finished", "run.cancelled", "run.deleted"]));
    expect((await events(owner.client, "?action=run.launched")).total).toBe(expected.filter((e) => e.action === "run.launched").length); // 2 runs + 2 design runs
    const comparisons = await events(owner.client, "?action=comparison");
    expect(comparisons.events.map((e) => e.action).reverse()).toEqual(["comparison.created", "comparison.launched", "comparison.cancelled", "comparison.deleted"]);
    const byModeler = await events(owner.client, `?actor=${encodeURIComponent(modeler.email.toUpperCase())}`);
    expect(byModeler.total).toBe(expected.filter((e) => e.actor === modeler.email).length);
    expect((await events(owner.client, "?actor=worker")).events.map((e) => e.action)).toEqual(["run.finished"]);
    const today = new Date().toISOString().slice(0, 10);
    const tomorrow = new Date(Date.now() + 86_400_000).toISOString().slice(0, 10);
    const yesterday = new Date(Date.now() - 86_400_000).toISOString().slice(0, 10);
    expect((await events(owner.client, `?from=${today}&to=${today}`)).total).toBe(expected.length);
    expect((await events(owner.client, `?from=${tomorrow}`)).total).toBe(0);
    expect((await events(owner.client, `?to=${yesterday}`)).total).toBe(0);
    const page = await events(owner.client, "?limit=3&offset=3");
    expect(page.events).toHaveLength(3);
  });

  it("bad filters are 422 naming the parameter; other roles get 403", async () => {
    const bad = await owner.client.request("GET", `/api/labs/${owner.labId}/audit?action=run.exploded`);
    expect(bad.status).toBe(422);
    expect(bad.json.error).toBe("action: unknown action");
    expect((await owner.client.request("GET", `/api/labs/${owner.labId}/audit?from=yesterday`)).json.error).toMatch(/^from: /);
    expect((await owner.client.request("GET", `/api/labs/${owner.labId}/audit?from=2026-02-02&to=2026-02-01`)).json.error).toBe("to: is before from");
    const asModeler = await modeler.client.request("GET", `/api/labs/${owner.labId}/audit`);
    expect(asModeler.status).toBe(403);
    expect(asModeler.json.error).toMatch(/^role: /);
  });

  it("is append-only in the database", async () => {
    await expect(db("audit_events").where({ lab_id: owner.labId }).update({ action: "lab.renamed" })).rejects.toThrow(/append-only/);
  });
});

describe("a change and its audit event commit together", () => {
  // A trigger that refuses any event mentioning "unauditable" stands in for a failure between the
  // change and its event (a crash, a full disk): the change must be rolled back with the event.
  beforeAll(async () => {
    await db.raw(`create function test_refuse_unauditable() returns trigger language plpgsql as $$
      begin if new.details::text ilike '%unauditable%' then raise exception 'audit refused (test)'; end if; return new; end $$`);
  });
  afterAll(async () => {
    await db.raw("drop trigger if exists test_refuse_unauditable on audit_events");
    await db.raw("drop function if exists test_refuse_unauditable()");
  });

  it("a circuit, a run, a comparison, a launch, a rename and a role change whose events cannot be stored leave nothing behind", async () => {
    const c = await modeler.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: { ...twoStage, name: "Unauditable reporter" } });
    expect(c.status, c.text).toBe(201);
    const draft = await modeler.client.request("POST", "/api/comparisons", {
      lab_id: owner.labId, name: "Audit draft", designs: [{ version_id: c.json.version_id }, { version_id: c.json.version_id, overrides: { km: 3 } }], settings: { t_end: 10, dt: 1, runs: 10 },
    });
    expect(draft.status, draft.text).toBe(201);
    await db.raw("create trigger test_refuse_unauditable before insert on audit_events for each row execute function test_refuse_unauditable()");
    const count = async (table: string) => Number((await db(table).where({ lab_id: owner.labId }).count({ n: "*" }))[0]?.n);
    const before = { circuits: await count("circuits"), runs: await count("runs"), comparisons: await count("comparisons"), events: await count("audit_events") };

    const circuit = await modeler.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: { ...twoStage, name: "Unauditable copy" } });
    expect(circuit.status).toBe(500);
    const run = await modeler.client.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 10, dt: 1, runs: 10 });
    expect(run.status).toBe(500);
    const cmp = await modeler.client.request("POST", "/api/comparisons", {
      lab_id: owner.labId, name: "Unauditable pair", designs: [{ version_id: c.json.version_id }, { version_id: c.json.version_id }], settings: { t_end: 10, dt: 1, runs: 10 }, launch: true,
    });
    expect(cmp.status).toBe(500);
    // Launching the draft: its design runs name the circuit, so their run.launched events are refused.
    expect((await modeler.client.request("POST", `/api/comparisons/${draft.json.id}/launch`)).status).toBe(500);
    const rename = await owner.client.request("PATCH", `/api/labs/${owner.labId}`, { name: "Unauditable lab" });
    expect(rename.status).toBe(500);
    const who = await db("users").where({ email: modeler.email }).first("id");
    await db.raw("update users set email = ? where id = ?", [`unauditable-${modeler.email}`, who.id]);
    try {
      expect((await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${modeler.userId}`, { role: "reviewer" })).status).toBe(500);
    } finally {
      await db.raw("update users set email = ? where id = ?", [modeler.email, who.id]);
    }

    expect({ circuits: await count("circuits"), runs: await count("runs"), comparisons: await count("comparisons"), events: await count("audit_events") }).toEqual(before);
    expect((await db("labs").where({ id: owner.labId }).first("name")).name).toBe("Audited lab");
    expect((await db("comparisons").where({ id: draft.json.id }).first("status")).status).toBe("draft");
    expect((await db("memberships").where({ lab_id: owner.labId, user_id: modeler.userId }).first("role")).role).toBe("modeler");
  });
});
