import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { analyze } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";

import { newUser } from "../support/client";
import { testDb } from "../support/db";

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
let db: Knex;
let me: Awaited<ReturnType<typeof newUser>>;

beforeAll(async () => {
  db = testDb();
  me = await newUser("circuits");
});
afterAll(async () => {
  await db.destroy();
});

const countCircuits = async (labId: string) => Number((await db("circuits").where({ lab_id: labId }).count("* as n").first())!.n);

describe("circuits and immutable versions", () => {
  it("POST /api/circuits stores version 1, and GET /api/versions/:id returns the same circuit", async () => {
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: ringTimer });
    expect(r.status).toBe(201);
    const v = await me.client.request("GET", `/api/versions/${r.json.version_id}`);
    expect(v.status).toBe(200);
    expect(v.json).toEqual(ringTimer);
    const c = await me.client.request("GET", `/api/circuits/${r.json.id}`);
    expect(c.json.versions).toHaveLength(1);
    expect(c.json.versions[0]).toMatchObject({ number: 1, content_hash: expect.stringMatching(/^[0-9a-f]{64}$/) });
  });

  it("an edit makes version 2; saving identical content returns the existing version", async () => {
    const circuit = { ...ringTimer, name: "Ring timer, edits" };
    const first = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit });
    const same = await me.client.request("POST", `/api/circuits/${first.json.id}/versions`, { circuit });
    expect(same.status).toBe(200);
    expect(same.json).toMatchObject({ version_id: first.json.version_id, number: 1, created: false });
    const edited = await me.client.request("POST", `/api/circuits/${first.json.id}/versions`, {
      circuit: { ...circuit, parameters: { ...circuit.parameters, n: 2 } }, message: "lower cooperativity",
    });
    expect(edited.status).toBe(201);
    expect(edited.json.number).toBe(2);
    const list = await me.client.request("GET", `/api/circuits/${first.json.id}`);
    expect(list.json.versions.map((v: { number: number; message: string | null }) => [v.number, v.message])).toEqual([[2, "lower cooperativity"], [1, null]]);
  });

  it("a stored version cannot be changed, even in SQL", async () => {
    const row = await db("circuit_versions").first("id");
    await expect(db("circuit_versions").where({ id: row.id }).update({ message: "tampered" })).rejects.toThrow(/immutable/);
  });

  it("a circuit that breaks a rule is a 422 naming the field, and nothing is stored", async () => {
    const bad = structuredClone(ringTimer);
    bad.name = "Broken ring";
    bad.reactions[3].rate.k = "Kc";
    const before = await countCircuits(me.labId);
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: bad });
    expect(r.status).toBe(422);
    expect(r.json.error).toBe('reactions[3].rate.k: unknown parameter "Kc"');
    expect(await countCircuits(me.labId)).toBe(before);
  });

  it("a body with neither circuit nor sbml is a 422 naming circuit; an unknown lab is a 404", async () => {
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId });
    expect(r.status).toBe(422);
    expect(r.json.error).toMatch(/^circuit: /);
    const other = await me.client.request("POST", "/api/circuits", { lab_id: "999999", circuit: ringTimer });
    expect(other.status).toBe(404);
  });

  it("a second circuit with the same name in the lab is a 409", async () => {
    const circuit = { ...ringTimer, name: "Twice" };
    expect((await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit })).status).toBe(201);
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit });
    expect(r.status).toBe(409);
    expect(r.json.error).toMatch(/^circuit\.name: /);
  });

  it("GET /api/circuits lists the lab's circuits with version counts and filters by name", async () => {
    const all = await me.client.request("GET", `/api/circuits?lab_id=${me.labId}`);
    expect(all.json.circuits.length).toBeGreaterThanOrEqual(3);
    const some = await me.client.request("GET", `/api/circuits?lab_id=${me.labId}&q=edits`);
    expect(some.json.circuits).toEqual([expect.objectContaining({ name: "Ring timer, edits", versions: 2 })]);
    const bad = await me.client.request("GET", `/api/circuits?lab_id=${me.labId}&limit=5000`);
    expect(bad.status).toBe(422);
    expect(bad.json.error).toMatch(/^limit: /);
  });
});

describe("version views", () => {
  it("GET /api/versions/:id/counts gives Ω = 0.602214 molecules per nM in 1 fL (SI Avogadro constant)", async () => {
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...ringTimer, name: "Counts" } });
    const counts = await me.client.request("GET", `/api/versions/${r.json.version_id}/counts`);
    expect(counts.status).toBe(200);
    // 1e-15 L · 6.02214076e23 /mol · 1e-9 mol/L (SCIENCE.md)
    expect(counts.json.omega).toBeCloseTo(0.602214076, 9);
    // A Hill constant K = 20 nM becomes 20·Ω molecules.
    const K = counts.json.constants.find((c: { reaction: string; name: string }) => c.reaction === "make_A" && c.name === "K");
    expect(K.molecules).toBeCloseTo(20 * 0.602214076, 9);
  });

  it("GET /api/versions/:id/analysis is the engine's analyze() of the stored circuit", async () => {
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...ringTimer, name: "Analysis" } });
    const a = await me.client.request("GET", `/api/versions/${r.json.version_id}/analysis`);
    expect(a.status).toBe(200);
    const stored = (await me.client.request("GET", `/api/versions/${r.json.version_id}`)).json;
    expect(a.json).toEqual(JSON.parse(JSON.stringify(analyze(compileModel(stored)))));
    expect(a.json.oscillatory).toBe(true); // the CONTRACT.md ring timer (n = 4, K = 20 nM) has a complex pair in the right half-plane
  });
});

describe("SBML in and out", () => {
  it("POST /api/circuits with SBML stores a circuit marked as imported from SBML", async () => {
    const sbml = readFileSync("tests/fixtures/sbml-l3v1-gene.xml", "utf8");
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, sbml });
    expect(r.status, r.text).toBe(201);
    const c = await me.client.request("GET", `/api/circuits/${r.json.id}`);
    expect(c.json.versions[0].source_format).toBe("sbml");
  });

  it("bad SBML is a 422 naming the SBML problem, and nothing is stored", async () => {
    const before = await countCircuits(me.labId);
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, sbml: "<sbml><model><listOfReactions><reaction id='r1'/></listOfReactions></model></sbml>" });
    expect(r.status).toBe(422);
    expect(r.json.error).toMatch(/^sbml/);
    expect(await countCircuits(me.labId)).toBe(before);
  });

  it("GET /api/versions/:id/sbml exports SBML L3V2 that imports back to the same circuit", async () => {
    const circuit = { ...ringTimer, name: "Round trip" };
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit });
    const sbml = await me.client.request("GET", `/api/versions/${r.json.version_id}/sbml`);
    expect(sbml.status).toBe(200);
    expect(sbml.text).toMatch(/<sbml[^>]*level="3"[^>]*version="2"/);
    const other = await newUser("roundtrip");
    const back = await other.client.request("POST", "/api/circuits", { lab_id: other.labId, sbml: sbml.text });
    expect(back.status, back.text).toBe(201);
    const stored = await other.client.request("GET", `/api/versions/${back.json.version_id}`);
    expect(stored.json).toEqual(circuit);
  });
});
