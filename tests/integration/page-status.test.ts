// A page for something outside the caller's labs, or for nothing at all, answers HTTP 404 (the
// not-found page with a 404 status), never a 200 that only looks like a not-found page, and
// without a server error on the way (a page that throws while its layout says "not found" still
// answers 404, but logs the error and streams its digest to the browser).
import { readFileSync } from "node:fs";

import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { type Client, newUser } from "../support/client";
import { testEnv } from "../support/env";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));

let owner: Awaited<ReturnType<typeof newUser>>;
let outsider: Awaited<ReturnType<typeof newUser>>;
let ids: { circuit: string; run: string; comparison: string; dataset: string };

// A server error's digest in the streamed page (`E{"digest":"1589408083"}`, JSON-escaped inside a
// script); Next's own not-found and redirect signals carry digests starting NEXT_.
const ERROR_DIGEST = /digest\\?"\s*:\s*\\?"(?!NEXT_)([^"\\]+)/;

/** The page's status; "status+error <digest>" when the page also hit a server error. */
async function status(client: Client, path: string): Promise<number | string> {
  const res = await fetch(testEnv().baseUrl + path, { headers: { cookie: client.cookieHeader() }, redirect: "manual" });
  const digest = ERROR_DIGEST.exec(await res.text())?.[1];
  return digest ? `${res.status}+error ${digest}` : res.status;
}

/** Every page of lab `lab` that shows one of the owner's objects. */
const objectPages = (lab: string) => [
  `/labs/${lab}/circuits/${ids.circuit}`,
  `/labs/${lab}/circuits/${ids.circuit}/versions`,
  `/labs/${lab}/circuits/${ids.circuit}/counts`,
  `/labs/${lab}/circuits/${ids.circuit}/stability`,
  `/labs/${lab}/runs/${ids.run}`,
  `/labs/${lab}/comparisons/${ids.comparison}`,
  `/labs/${lab}/data/${ids.dataset}`,
];
const labPages = (lab: string) => [
  `/labs/${lab}`, `/labs/${lab}/circuits`, `/labs/${lab}/runs`, `/labs/${lab}/runs/new`, `/labs/${lab}/comparisons`,
  `/labs/${lab}/comparisons/new`, `/labs/${lab}/data`, `/labs/${lab}/members`,
];

beforeAll(async () => {
  owner = await newUser("pages");
  outsider = await newUser("stranger");
  const c = await owner.client.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: { ...birthDeath, name: `Pages ${Date.now()}` } });
  expect(c.status, c.text).toBe(201);
  const r = await owner.client.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 10, dt: 1, runs: 1 });
  expect(r.status, r.text).toBe(202);
  // No worker in this file: cancel it so nothing waits in the queue.
  await owner.client.request("POST", `/api/runs/${r.json.id}/cancel`);
  const cmp = await owner.client.request("POST", "/api/comparisons", {
    lab_id: owner.labId, name: "Pages", designs: [{ version_id: c.json.version_id }, { version_id: c.json.version_id, overrides: { k: 20 } }], settings: { t_end: 10, dt: 1, runs: 10 },
  });
  expect(cmp.status, cmp.text).toBe(201);
  const f = new FormData();
  for (const [k, v] of Object.entries({ lab_id: owner.labId, kind: "snapshot", name: `Plate ${Date.now()}`, amount_unit: "a.u.", molecules_per_unit: "2" })) f.set(k, v);
  f.set("file", new Blob(["gfp\n10\n12\n9\n"], { type: "text/csv" }), "plate.csv");
  const ds = await owner.client.request("POST", "/api/datasets", f);
  expect(ds.status, ds.text).toBe(201);
  ids = { circuit: c.json.id, run: r.json.id, comparison: cmp.json.id, dataset: ds.json.id };
});

afterAll(() => undefined);

describe("page status codes", () => {
  it("a member gets 200 for every page of the lab and of its objects", async () => {
    const got: Record<string, number | string> = {};
    for (const p of [...labPages(owner.labId), ...objectPages(owner.labId)]) got[p] = await status(owner.client, p);
    expect(Object.values(got).every((s) => s === 200), JSON.stringify(got)).toBe(true);
  });

  it("a signed-in outsider gets 404 for every page of a lab that is not theirs", async () => {
    const got: Record<string, number | string> = {};
    for (const p of [...labPages(owner.labId), ...objectPages(owner.labId)]) got[p] = await status(outsider.client, p);
    expect(Object.values(got).every((s) => s === 404), JSON.stringify(got)).toBe(true);
  });

  it("another lab's object under the outsider's own lab is a 404", async () => {
    const got: Record<string, number | string> = {};
    for (const p of objectPages(outsider.labId)) got[p] = await status(outsider.client, p);
    expect(Object.values(got).every((s) => s === 404), JSON.stringify(got)).toBe(true);
  });

  it("an object that does not exist (or a malformed id) is a 404 for a member", async () => {
    const lab = owner.labId;
    const got: Record<string, number | string> = {};
    for (const p of [`/labs/${lab}/runs/999999999`, `/labs/${lab}/runs/abc`, `/labs/${lab}/circuits/999999999`, `/labs/${lab}/comparisons/999999999`, `/labs/${lab}/data/999999999`, `/labs/${lab}/nothing-here`]) {
      got[p] = await status(owner.client, p);
    }
    expect(Object.values(got).every((s) => s === 404), JSON.stringify(got)).toBe(true);
  });
});
