// Text PostgreSQL cannot store (a NUL character) or that is not Unicode at all (a lone UTF-16
// surrogate, which JSON's \uD800 escape can carry) is refused at the door with 422 naming the
// field, whichever route it comes through, and nothing is stored.
import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
const BAD = { nul: "bad\u0000name", surrogate: "bad\ud800name" } as const;

let db: Knex;
let me: Awaited<ReturnType<typeof newUser>>;
let versionId: string;
let circuitId: string;

interface Row {
  name: string;
  /** The request with `bad` in one text field. */
  send: (bad: string) => Promise<{ status: number; json: any; text: string }>;
  /** The field the error must name, as the start of the message. */
  field: string;
  /** Tables whose row counts must not change. */
  tables: string[];
  /** The kinds of bad text the route can receive at all (default: both). */
  kinds?: (keyof typeof BAD)[];
}

const circuitForm = (labId: string, text: string, name = "c.circuit.json") => {
  const f = new FormData();
  f.set("lab_id", labId);
  f.set("file", new Blob([text], { type: "application/json" }), name);
  return f;
};

const ROWS: Row[] = [
  { name: "sign-up name", send: (bad) => new Client().request("POST", "/api/signup", { email: `t-${Date.now()}-${Math.random().toString(36).slice(2, 7)}@test.example`, name: bad, password: "correct horse battery" }), field: "name", tables: ["users", "labs"] },
  { name: "lab rename", send: (bad) => me.client.request("PATCH", `/api/labs/${me.labId}`, { name: bad }), field: "name", tables: ["audit_events"] },
  { name: "circuit name", send: (bad) => me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...birthDeath, name: bad } }), field: "circuit.name", tables: ["circuits", "circuit_versions"] },
  { name: "a species name, deep in the body", send: (bad) => me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...birthDeath, species: [{ id: "X", initial: 0, name: bad }] } }), field: "circuit.species[0].name", tables: ["circuits", "circuit_versions"] },
  { name: "version message", send: (bad) => me.client.request("POST", `/api/circuits/${circuitId}/versions`, { circuit: { ...birthDeath, parameters: { k: 11, g: 0.1 } }, message: bad }), field: "message", tables: ["circuit_versions"] },
  { name: "token name", send: (bad) => me.client.request("POST", "/api/tokens", { name: bad }), field: "name", tables: ["api_tokens"] },
  { name: "comparison name", send: (bad) => me.client.request("POST", "/api/comparisons", { lab_id: me.labId, name: bad, designs: [{ version_id: versionId }, { version_id: versionId, overrides: { k: 20 } }], settings: { t_end: 10, dt: 1, runs: 10 } }), field: "name", tables: ["comparisons"] },
  { name: "a key of an object", send: (bad) => me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...birthDeath, parameters: { [bad]: 1, k: 10, g: 0.1 } } }), field: "circuit.parameters", tables: ["circuits"] },
  {
    name: "dataset upload, a form field",
    send: (bad) => {
      const f = new FormData();
      for (const [k, v] of Object.entries({ lab_id: me.labId, kind: "snapshot", name: bad, amount_unit: "a.u.", molecules_per_unit: "2" })) f.set(k, v);
      f.set("file", new Blob(["gfp\n10\n12\n"], { type: "text/csv" }), "plate.csv");
      return me.client.request("POST", "/api/datasets", f);
    },
    field: "name", tables: ["datasets"],
    // Form fields are sent as UTF-8, where a lone surrogate cannot exist (the browser sends U+FFFD).
    kinds: ["nul"],
  },
  { name: "circuit file upload, a name inside the JSON file", send: (bad) => me.client.request("POST", "/api/circuits/upload", circuitForm(me.labId, JSON.stringify({ ...birthDeath, name: bad }))), field: "file: name", tables: ["circuits"] },
  { name: "a query parameter", send: (bad) => me.client.request("GET", `/api/circuits?lab_id=${me.labId}&q=${encodeURIComponent(bad)}`), field: "q", tables: [],
    // A URL cannot carry a lone surrogate: percent-decoding turns invalid UTF-8 into U+FFFD.
    kinds: ["nul"] },
];

async function countRows(tables: string[]): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  for (const t of tables) out[t] = Number((await db(t).count({ n: "*" }))[0]!.n);
  return out;
}

beforeAll(async () => {
  db = testDb();
  me = await newUser("text");
  const c = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...birthDeath, name: `Text fields ${Date.now()}` } });
  expect(c.status, c.text).toBe(201);
  circuitId = c.json.id;
  versionId = c.json.version_id;
});

afterAll(async () => {
  await db.destroy();
});

describe("NUL characters and lone surrogates in text fields", () => {
  for (const row of ROWS) {
    for (const [kind, bad] of Object.entries(BAD).filter(([k]) => !row.kinds || row.kinds.includes(k as keyof typeof BAD))) {
      it(`${row.name}: a ${kind === "nul" ? "NUL character" : "lone surrogate"} is a 422 naming ${row.field}; nothing is stored`, async () => {
        const before = await countRows(row.tables);
        const r = await row.send(bad);
        expect(r.status, r.text).toBe(422);
        expect(r.json.error.startsWith(`${row.field}: `), r.json.error).toBe(true);
        expect(r.json.error).toMatch(kind === "nul" ? /NUL/ : /surrogate/);
        expect(await countRows(row.tables)).toEqual(before);
      });
    }
  }

  it("well-formed text beyond the BMP (a surrogate pair) is fine", async () => {
    const r = await me.client.request("POST", "/api/tokens", { name: "key 🔑" });
    expect(r.status, r.text).toBe(201);
    expect(r.json.name).toBe("key 🔑");
  });

  it("the lab name is still what it was", async () => {
    expect((await me.client.request("GET", `/api/labs/${me.labId}`)).json.name).not.toMatch(/bad/);
  });
});
