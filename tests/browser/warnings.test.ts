// Warnings shown next to the numbers they concern (issue 12 item 1), in Debian Chromium against
// the built app and a real worker: a run of an SBML-made version lists its import warnings on the
// run page; the circuit page lists them for the version; a circuit file's run page shows none.
import { readFileSync } from "node:fs";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser, type Client } from "../support/client";
import { startWorker, stopWorker, waitForOutput, waitForRun } from "../support/worker";

const sbml = readFileSync("tests/fixtures/sbml-l3v2-no-units.xml", "utf8");
const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));

let worker: ReturnType<typeof startWorker>;
let me: Client;
let labId: string;
let circuitId: string;
let sbmlRunId: string;
let plainRunId: string;
let ctx: BrowserContext;
let page: Page;

// t_end 200 leaves both circuits a window after 5 relaxation times: only the import warnings show.
async function runOf(versionId: string): Promise<string> {
  const r = await me.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 200, dt: 1, runs: 20, seed: 5 });
  expect(r.status, r.text).toBe(202);
  const run = await waitForRun(me, r.json.id);
  expect(run.status).toBe("succeeded");
  return r.json.id;
}

beforeAll(async () => {
  worker = startWorker();
  await waitForOutput(worker, /worker ready/);
  const u = await newUser("warnpage");
  me = u.client;
  labId = u.labId;
  const made = await me.request("POST", "/api/circuits", { lab_id: labId, sbml });
  expect(made.status, made.text).toBe(201);
  circuitId = made.json.id;
  const plain = await me.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...birthDeath, name: "Birth-death file" } });
  expect(plain.status, plain.text).toBe(201);
  sbmlRunId = await runOf(made.json.version_id);
  plainRunId = await runOf(plain.json.version_id);
  ctx = await openBrowser();
  page = await ctx.newPage();
  await signInAs(page, u.email, u.password);
  await page.waitForURL(/\/labs\/\d+$/);
});

afterAll(async () => {
  await ctx?.close();
  if (worker) await stopWorker(worker, "SIGKILL");
});

describe("warnings on the pages", () => {
  it("the run page of an SBML-made version lists its warnings beside the results, with code and field", async () => {
    await page.goto(`/labs/${labId}/runs/${sbmlRunId}`);
    const list = page.getByTestId("run-warnings");
    await list.waitFor();
    expect(await list.getByRole("heading").textContent()).toBe("Warnings on these results");
    const items = await list.getByRole("listitem").allTextContents();
    expect(items).toHaveLength(2);
    expect(items[1]).toContain("no substance unit declared; amounts read as molecules");
    expect(items[1]).toContain("sbml-no-substance-unit");
    expect(items[1]).toContain("about units.amount");
    await page.getByTestId("noise-table").waitFor(); // the results render below the list
    await shot(page, "run-warnings");
  });

  it("the circuit page lists the version's import warnings", async () => {
    await page.goto(`/labs/${labId}/circuits/${circuitId}`);
    const list = page.getByTestId("import-warnings");
    await list.waitFor();
    expect(await list.textContent()).toContain("no time unit declared; read as seconds");
  });

  it("the run page of a circuit file shows no warning list", async () => {
    await page.goto(`/labs/${labId}/runs/${plainRunId}`);
    await page.getByTestId("noise-table").waitFor();
    expect(await page.getByTestId("run-warnings").count()).toBe(0);
  });
});
