import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";

type Role = "owner" | "modeler" | "reviewer";
interface Ctx {
  labId: string; reviewerId: string; circuitId: string; versionId: string;
  spareEmail: () => Promise<string>; disposableCircuit: () => Promise<string>; disposableRun: (keepQueued?: boolean) => Promise<string>;
  datasetId: string; disposableDataset: () => Promise<string>; disposableInvitation: () => Promise<string>; disposableMember: () => Promise<string>;
}
interface RouteCase { name: string; method: string; path: (c: Ctx) => string | Promise<string>; body?: (c: Ctx) => Promise<unknown> | unknown; allowed: Role[] }

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
let serial = 0;
const uniqueCircuit = (vA = 40) => ({ ...ringTimer, name: `Ring ${++serial}-${Date.now()}`, parameters: { ...ringTimer.parameters, vA } });
/** A multipart dataset upload (a small snapshot) under a fresh name. */
const datasetForm = (labId: string) => {
  const f = new FormData();
  for (const [k, v] of Object.entries({ lab_id: labId, kind: "snapshot", name: `Plate ${++serial}-${Date.now()}`, amount_unit: "a.u.", molecules_per_unit: "2" })) f.set(k, v);
  f.set("file", new Blob(["gfp\n10\n12\n9\n"], { type: "text/csv" }), "plate.csv");
  return f;
};
const circuitFileForm = (labId: string) => {
  const f = new FormData();
  f.set("lab_id", labId);
  f.set("file", new Blob([JSON.stringify(uniqueCircuit())], { type: "application/json" }), "ring.circuit.json");
  return f;
};

/**
 * Every lab-scoped route, with the roles that may call it. Later routes join this table;
 * each row is checked for 401 (no session), 404 (not a member) and 403 (role may not).
 */
export const LAB_ROUTES: RouteCase[] = [
  { name: "read a lab", method: "GET", path: (c) => `/api/labs/${c.labId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "rename a lab", method: "PATCH", path: (c) => `/api/labs/${c.labId}`, body: () => ({ name: "Renamed lab" }), allowed: ["owner"] },
  { name: "list members", method: "GET", path: (c) => `/api/labs/${c.labId}/members`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "add a member", method: "POST", path: (c) => `/api/labs/${c.labId}/members`, body: async (c) => ({ email: await c.spareEmail(), role: "reviewer" }), allowed: ["owner"] },
  { name: "change a role", method: "PATCH", path: (c) => `/api/labs/${c.labId}/members/${c.reviewerId}`, body: () => ({ role: "reviewer" }), allowed: ["owner"] },
  { name: "list circuits", method: "GET", path: (c) => `/api/circuits?lab_id=${c.labId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "create a circuit", method: "POST", path: () => "/api/circuits", body: (c) => ({ lab_id: c.labId, circuit: uniqueCircuit() }), allowed: ["owner", "modeler"] },
  { name: "read a circuit", method: "GET", path: (c) => `/api/circuits/${c.circuitId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "save a version", method: "POST", path: (c) => `/api/circuits/${c.circuitId}/versions`, body: () => ({ circuit: { ...ringTimer, parameters: { ...ringTimer.parameters, vA: 30 + serial++ } } }), allowed: ["owner", "modeler"] },
  { name: "delete a circuit", method: "DELETE", path: async (c) => `/api/circuits/${await c.disposableCircuit()}`, allowed: ["owner"] },
  { name: "read a version", method: "GET", path: (c) => `/api/versions/${c.versionId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "read a version's counts", method: "GET", path: (c) => `/api/versions/${c.versionId}/counts`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "read a version's analysis", method: "GET", path: (c) => `/api/versions/${c.versionId}/analysis`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "read a version's import warnings", method: "GET", path: (c) => `/api/versions/${c.versionId}/warnings`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "list runs", method: "GET", path: (c) => `/api/runs?lab_id=${c.labId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "launch a run", method: "POST", path: () => "/api/runs", body: (c) => ({ version_id: c.versionId, method: "ssa", t_end: 10, dt: 1, runs: 1 }), allowed: ["owner", "modeler"] },
  { name: "read a run", method: "GET", path: async (c) => `/api/runs/${await c.disposableRun()}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "cancel a run", method: "POST", path: async (c) => `/api/runs/${await c.disposableRun(true)}/cancel`, allowed: ["owner", "modeler"] },
  { name: "delete a run", method: "DELETE", path: async (c) => `/api/runs/${await c.disposableRun()}`, allowed: ["owner"] },
  { name: "remove a member", method: "DELETE", path: async (c) => `/api/labs/${c.labId}/members/${await c.disposableMember()}`, allowed: ["owner"] },
  { name: "list datasets", method: "GET", path: (c) => `/api/datasets?lab_id=${c.labId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "upload a dataset", method: "POST", path: () => "/api/datasets", body: (c) => datasetForm(c.labId), allowed: ["owner", "modeler"] },
  { name: "read a dataset", method: "GET", path: (c) => `/api/datasets/${c.datasetId}?values=1`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "download a dataset", method: "GET", path: (c) => `/api/datasets/${c.datasetId}/file`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "delete a dataset", method: "DELETE", path: async (c) => `/api/datasets/${await c.disposableDataset()}`, allowed: ["owner"] },
  { name: "import a circuit file", method: "POST", path: () => "/api/circuits/upload", body: (c) => circuitFileForm(c.labId), allowed: ["owner", "modeler"] },
  { name: "list invitations", method: "GET", path: (c) => `/api/labs/${c.labId}/invitations`, allowed: ["owner"] },
  { name: "invite by e-mail", method: "POST", path: (c) => `/api/labs/${c.labId}/invitations`, body: () => ({ email: `invitee-${++serial}-${Date.now()}@test.example`, role: "reviewer" }), allowed: ["owner"] },
  { name: "withdraw an invitation", method: "DELETE", path: async (c) => `/api/labs/${c.labId}/invitations/${await c.disposableInvitation()}`, allowed: ["owner"] },
  { name: "read the audit trail", method: "GET", path: (c) => `/api/labs/${c.labId}/audit?action=run`, allowed: ["owner"] },
  { name: "set my run e-mails", method: "PUT", path: () => "/api/me/notifications", body: (c) => ({ lab_id: c.labId, runs: "mine" }), allowed: ["owner", "modeler", "reviewer"] },
  { name: "list comparisons", method: "GET", path: (c) => `/api/comparisons?lab_id=${c.labId}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "create a comparison", method: "POST", path: () => "/api/comparisons", body: (c) => comparisonBody(c), allowed: ["owner", "modeler"] },
  { name: "read a comparison", method: "GET", path: async (c) => `/api/comparisons/${await disposableComparison(c)}`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "download a comparison's noise table", method: "GET", path: async (c) => `/api/comparisons/${await disposableComparison(c)}/csv`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "read a comparison's bands", method: "GET", path: async (c) => `/api/comparisons/${await disposableComparison(c)}/bands?species=A`, allowed: ["owner", "modeler", "reviewer"] },
  { name: "launch a comparison", method: "POST", path: async (c) => `/api/comparisons/${await disposableComparison(c)}/launch`, allowed: ["owner", "modeler"] },
  { name: "cancel a comparison", method: "POST", path: async (c) => `/api/comparisons/${await disposableComparison(c, true)}/cancel`, allowed: ["owner", "modeler"] },
  { name: "delete a comparison", method: "DELETE", path: async (c) => `/api/comparisons/${await disposableComparison(c)}`, allowed: ["owner"] },
];

/** Two designs of the lab's ring timer, small enough never to matter (no worker runs in this file). */
function comparisonBody(c: Ctx) {
  return { lab_id: c.labId, name: `Comparison ${++serial}`, designs: [{ version_id: c.versionId }, { version_id: c.versionId, overrides: { n: 3 } }], settings: { t_end: 10, dt: 1, runs: 10 } };
}
/** A comparison made by the owner: a draft, or launched (its runs stay queued; afterAll cancels them). */
async function disposableComparison(c: Ctx, launch = false): Promise<string> {
  return (await owner.client.request("POST", "/api/comparisons", { ...comparisonBody(c), launch })).json.id;
}

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
let outsider: Awaited<ReturnType<typeof newUser>>;
const members: Partial<Record<Role, Client>> = {};
let ctx: Ctx;
const queuedRuns: string[] = [];

beforeAll(async () => {
  db = testDb();
  owner = await newUser("owner");
  outsider = await newUser("outsider");
  const modeler = await newUser("modeler");
  const reviewer = await newUser("reviewer");
  for (const [u, role] of [[modeler, "modeler"], [reviewer, "reviewer"]] as const) {
    const r = await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: u.email, role });
    expect(r.status).toBe(201);
  }
  members.owner = owner.client;
  members.modeler = modeler.client;
  members.reviewer = reviewer.client;
  const created = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: ringTimer });
  expect(created.status, created.text).toBe(201);
  const dataset = await owner.client.request("POST", "/api/datasets", datasetForm(owner.labId));
  expect(dataset.status, dataset.text).toBe(201);
  ctx = {
    datasetId: dataset.json.id,
    disposableDataset: async () => (await owner.client.request("POST", "/api/datasets", datasetForm(owner.labId))).json.id,
    disposableInvitation: async () => (await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: `gone-${++serial}-${Date.now()}@test.example`, role: "modeler" })).json.id,
    disposableMember: async () => {
      const spare = await newUser("leaver");
      await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: spare.email, role: "reviewer" });
      return spare.userId;
    },
    labId: owner.labId, reviewerId: reviewer.userId, circuitId: created.json.id, versionId: created.json.version_id,
    spareEmail: async () => (await newUser("spare")).email,
    disposableCircuit: async () => (await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: uniqueCircuit() })).json.id,
    disposableRun: async (keepQueued = false) => {
      const r = await owner.client.request("POST", "/api/runs", { version_id: created.json.version_id, method: "ssa", t_end: 10, dt: 1, runs: 1 });
      // No worker runs in this file: cancel at once, or at the end, so nothing is left waiting.
      if (keepQueued) queuedRuns.push(r.json.id);
      else await owner.client.request("POST", `/api/runs/${r.json.id}/cancel`);
      return r.json.id;
    },
  };
});

afterAll(async () => {
  await db("runs").whereIn("lab_id", [owner.labId]).whereIn("status", ["queued", "running"]).update({ status: "cancelled" });
  await db.destroy();
});

describe("sign-up and sign-in", () => {
  it("POST /api/signup creates the user, a lab of their own and an owner membership", async () => {
    const { userId, labId, client } = await newUser("fresh");
    const row = await db("memberships").where({ user_id: userId, lab_id: labId }).first();
    expect(row.role).toBe("owner");
    const labs = await client.request("GET", "/api/labs");
    expect(labs.status).toBe(200);
    expect(labs.json.labs).toEqual([{ id: labId, name: "fresh's lab", role: "owner" }]);
  });

  it("stores the password only as a bcrypt hash", async () => {
    const { email, password } = await newUser("hash");
    const row = await db("users").where({ email }).first();
    expect(row.password_hash).toMatch(/^\$2[aby]\$12\$/);
    expect(row.password_hash).not.toContain(password);
  });

  it("refuses a wrong password and an unknown e-mail", async () => {
    const { email } = await newUser("wrongpw");
    expect(await new Client().signIn(email, "not the password at all")).toBe(false);
    expect(await new Client().signIn("nobody@test.example", "whatever password")).toBe(false);
  });

  it("signs in the demo modeler with the demo password (CONTRACT.md §3)", async () => {
    const c = new Client();
    expect(await c.signIn("modeler@sentinel.example", "sentinel-demo")).toBe(true);
    const labs = await c.request("GET", "/api/labs");
    expect(labs.json.labs).toContainEqual(expect.objectContaining({ name: "Soil Sentinel", role: "modeler" }));
  });

  it("a second sign-up with the same e-mail (any case) writes nothing, and answers as for a new one (tests/integration/sessions.test.ts)", async () => {
    const { email } = await newUser("dup");
    const before = await db("users").count("* as n").first();
    const r = await new Client().request("POST", "/api/signup", { email: email.toUpperCase(), name: "Dup", password: "another password" });
    expect(r.status).toBe(202);
    expect(r.json.status).toBe("accepted");
    expect(await db("users").count("* as n").first()).toEqual(before);
  });
});

describe("bad sign-up input gets 400/422 naming the field, and nothing is written", () => {
  const cases: [string, unknown, RegExp][] = [
    ["missing e-mail", { name: "A", password: "long enough pw" }, /^email: /],
    ["missing password", { email: "a@test.example", name: "A" }, /^password: /],
    ["missing name", { email: "a@test.example", password: "long enough pw" }, /^name: /],
    ["bad e-mail", { email: "not-an-email", name: "A", password: "long enough pw" }, /^email: not a valid e-mail/],
    ["short password", { email: "a@test.example", name: "A", password: "short" }, /^password: at least 10/],
    ["unknown field", { email: "a@test.example", name: "A", password: "long enough pw", role: "owner" }, /role|Unrecognized/i],
    ["an array", [1, 2, 3], /^body: /],
  ];
  it.each(cases)("%s", async (_label, body, message) => {
    const before = await db("users").count("* as n").first();
    const r = await new Client().request("POST", "/api/signup", body);
    expect([400, 422]).toContain(r.status);
    expect(r.json.error).toMatch(message);
    expect(await db("users").count("* as n").first()).toEqual(before);
  });

  it("1 MB of junk is a 400 naming the body", async () => {
    const before = await db("users").count("* as n").first();
    const r = await new Client().request("POST", "/api/signup", undefined, "x".repeat(1024 * 1024));
    expect(r.status).toBe(400);
    expect(r.json.error).toMatch(/^body: /);
    expect(await db("users").count("* as n").first()).toEqual(before);
  });

  it("malformed JSON is a 400 naming the body", async () => {
    const r = await new Client().request("POST", "/api/signup", undefined, '{"email": ');
    expect(r.status).toBe(400);
    expect(r.json.error).toBe("body: not valid JSON");
  });
});

describe("every lab route checks the session, membership and role", () => {
  it.each(LAB_ROUTES)("$method $name: 401 without a session", async (route) => {
    const r = await new Client().request(route.method, await route.path(ctx), route.body ? await route.body(ctx) : undefined);
    expect(r.status).toBe(401);
    expect(r.json.error).toMatch(/^session: /);
  });

  it.each(LAB_ROUTES)("$method $name: 404 for a user outside the lab (its data stays private)", async (route) => {
    const r = await outsider.client.request(route.method, await route.path(ctx), route.body ? await route.body(ctx) : undefined);
    expect(r.status).toBe(404);
    expect(JSON.stringify(r.json)).not.toContain("Renamed lab");
  });

  for (const role of ["owner", "modeler", "reviewer"] as const) {
    it.each(LAB_ROUTES)(`$method $name as ${role}`, async (route) => {
      const r = await members[role]!.request(route.method, await route.path(ctx), route.body ? await route.body(ctx) : undefined);
      if (route.allowed.includes(role)) expect(r.status, r.text).toBeLessThan(300);
      else {
        expect(r.status).toBe(403);
        expect(r.json.error).toMatch(/^role: /);
      }
    });
  }

  it("GET /api/labs lists only the caller's own labs", async () => {
    const r = await outsider.client.request("GET", "/api/labs");
    expect(r.json.labs.map((l: { id: string }) => l.id)).toEqual([outsider.labId]);
  });

  it("the last owner cannot be demoted (409), and a role change applies at once", async () => {
    const demote = await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${owner.userId}`, { role: "modeler" });
    expect(demote.status).toBe(409);
    expect(demote.json.error).toMatch(/^role: /);
    const promote = await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${ctx.reviewerId}`, { role: "modeler" });
    expect(promote.status).toBe(200);
    const asNewModeler = await members.reviewer!.request("GET", "/api/labs");
    expect(asNewModeler.json.labs).toContainEqual(expect.objectContaining({ id: owner.labId, role: "modeler" }));
    await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${ctx.reviewerId}`, { role: "reviewer" });
  });

  it("an unknown role is a 422 naming the role field", async () => {
    const r = await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${ctx.reviewerId}`, { role: "admin" });
    expect(r.status).toBe(422);
    expect(r.json.error).toMatch(/^role: /);
  });
});

describe("personal API tokens", () => {
  it("a token is shown once, stored hashed, carries the user's roles, and stops working when revoked", async () => {
    const { client, labId } = await newUser("tokens");
    const created = await client.request("POST", "/api/tokens", { name: "script" });
    expect(created.status).toBe(201);
    const token: string = created.json.token;
    const row = await db("api_tokens").where({ id: created.json.id }).first();
    expect(row.token_hash).not.toContain(token);
    const list = await client.request("GET", "/api/tokens");
    expect(JSON.stringify(list.json)).not.toContain(token);

    const script = Client.withToken(token);
    const labs = await script.request("GET", "/api/labs");
    expect(labs.json.labs).toEqual([expect.objectContaining({ id: labId, role: "owner" })]);
    expect((await script.request("GET", `/api/labs/${owner.labId}`)).status).toBe(404);
    expect((await script.request("POST", "/api/tokens", { name: "more" })).status).toBe(403);

    expect((await client.request("DELETE", `/api/tokens/${created.json.id}`)).status).toBe(204);
    expect((await script.request("GET", "/api/labs")).status).toBe(401);
    expect((await Client.withToken("bw_made_up").request("GET", "/api/labs")).status).toBe(401);
  });
});
