import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { newUser } from "../support/client";
import { testDb } from "../support/db";
import { deepMathSbml, doublingChainSbml, sbmlModel, splitEntitySbml } from "../support/hostile-sbml";
import { waitForRun, workerPool } from "../support/worker";

// Hostile circuit files sent by an ordinary member, against the real app, worker and PostgreSQL.
const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
const workers = workerPool();
let db: Knex;
let me: Awaited<ReturnType<typeof newUser>>;

beforeAll(async () => {
  db = testDb();
  me = await newUser("hostile");
});
afterAll(async () => {
  await workers.killAll();
  await db.destroy();
});

/** Circuits and versions stored in my lab: a refused file must leave both unchanged. */
async function stored(): Promise<{ circuits: number; versions: number }> {
  const circuits = Number((await db("circuits").where({ lab_id: me.labId }).count("* as n").first())!.n);
  const versions = Number(
    (await db("circuit_versions").join("circuits", "circuits.id", "circuit_versions.circuit_id").where("circuits.lab_id", me.labId).count("* as n").first())!.n,
  );
  return { circuits, versions };
}

function uploadForm(text: string, name: string): FormData {
  const f = new FormData();
  f.append("lab_id", me.labId);
  f.append("file", new Blob([text], { type: "application/xml" }), name);
  return f;
}

describe("an SBML file that expands exponentially", () => {
  it("is a 422 naming the function definition within milliseconds, and the app, the worker and PostgreSQL still answer", async () => {
    const before = await stored();
    const xml = doublingChainSbml(29); // f0(x) = x, f_i(x) = f_{i−1}(x) + f_{i−1}(x) up to f29, kinetic law f29(1)
    expect(xml.length).toBeLessThan(8 * 1024);
    const t0 = performance.now();
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, sbml: xml });
    const ms = performance.now() - t0;
    expect(r.status).toBe(422);
    expect(r.json.error).toBe('sbml: functionDefinition "f9": expands to more than 2000 nodes');
    expect(ms).toBeLessThan(2000); // unbounded, the request never returned and the web process died at its heap limit
    expect(await stored()).toEqual(before);

    // The app answers and reaches its database.
    const health = await me.client.request("GET", "/api/health");
    expect(health.status).toBe(200);
    expect(health.json).toEqual({ ok: true });
    // PostgreSQL answers us directly.
    expect((await db.raw("select 1 as one")).rows[0].one).toBe(1);
    // A worker takes a small run to the end.
    await workers.start();
    const c = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...ringTimer, name: "After the attack" } });
    expect(c.status, c.text).toBe(201);
    const run = await me.client.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 10, dt: 1, runs: 2 });
    expect(run.status, run.text).toBe(202);
    expect((await waitForRun(me.client, run.json.id)).status).toBe("succeeded");
  });

  it("is refused the same way through the upload route, naming the file field", async () => {
    const before = await stored();
    const r = await me.client.request("POST", "/api/circuits/upload", uploadForm(doublingChainSbml(29), "chain.xml"));
    expect(r.status).toBe(422);
    expect(r.json.error).toBe('file: sbml: functionDefinition "f9": expands to more than 2000 nodes');
    expect(await stored()).toEqual(before);
  });
});

describe("SBML shaped to break the XML reader is a 422, not a 500", () => {
  it.each([
    ["MathML nested 150 deep", deepMathSbml(150), 'sbml: reaction "R1" kineticLaw: MathML nested more than 100 deep'],
    ["elements nested 300 deep", deepMathSbml(300), "sbml: elements nested more than 160 deep"],
    ["an entity declaration split over lines", splitEntitySbml(), "sbml: line 2: <!DOCTYPE> declarations are not allowed (SBML needs no DOCTYPE or entity declarations)"],
  ])("%s", async (_what, xml, message) => {
    const before = await stored();
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, sbml: xml });
    expect(r.status).toBe(422);
    expect(r.json.error).toBe(message);
    const up = await me.client.request("POST", "/api/circuits/upload", uploadForm(xml, "hostile.xml"));
    expect(up.status).toBe(422);
    expect(up.json.error).toBe(`file: ${message}`);
    expect(await stored()).toEqual(before);
  });
});

describe("species and parameters named like JavaScript object properties", () => {
  const reason = (id: string) => `"${id}" is a reserved name (a property of every JavaScript object); choose another`;
  const withParameter = (name: string) => {
    const c = structuredClone(ringTimer);
    c.name = `Parameter ${name}`;
    // JSON.parse makes "__proto__" an own key, so it goes out in the request like any other.
    c.parameters = JSON.parse(JSON.stringify(c.parameters).replace("{", `{"${name}":1,`));
    expect(JSON.stringify(c)).toContain(`"${name}":1`);
    return c;
  };
  const withSpecies = (name: string) => JSON.parse(JSON.stringify({ ...ringTimer, name: `Species ${name}` }).replace(/"A"/g, `"${name}"`));

  it.each([
    ["a parameter __proto__ (was silently dropped)", () => withParameter("__proto__"), `parameters.__proto__: ${reason("__proto__")}`],
    ["a parameter constructor", () => withParameter("constructor"), `parameters.constructor: ${reason("constructor")}`],
    ["a species __proto__ (was stored)", () => withSpecies("__proto__"), `species[0].id: ${reason("__proto__")}`],
    ["a species prototype", () => withSpecies("prototype"), `species[0].id: ${reason("prototype")}`],
  ])("%s in a circuit file is a 422 naming the field", async (_what, circuit, message) => {
    const before = await stored();
    const body = { lab_id: me.labId, circuit: circuit() };
    const r = await me.client.request("POST", "/api/circuits", body);
    expect(r.status).toBe(422);
    expect(r.json.error).toBe(message);
    expect(await stored()).toEqual(before);
  });

  it.each([
    ["species", sbmlModel("<cn>1</cn>", { speciesId: "__proto__" })],
    ["parameter", sbmlModel("<ci>__proto__</ci>", { parameters: '<parameter id="__proto__" value="2" constant="true"/>' })],
  ])("a %s __proto__ in SBML is a 422 naming it", async (kind, xml) => {
    const before = await stored();
    const r = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, sbml: xml });
    expect(r.status).toBe(422);
    expect(r.json.error).toBe(`sbml: ${kind} "__proto__": ${reason("__proto__")}`);
    expect(await stored()).toEqual(before);
  });
});
