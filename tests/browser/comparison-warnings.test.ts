// A comparison shows the warnings of its design runs next to its noise table (issue 12 item 1), in
// Debian Chromium against the built app and a real worker. Two designs of the two-stage reporter at
// t_end 200: the protein relaxes over 50 min, so 5 relaxation times do not fit and each design's
// run carries `window-too-short` (and the drift check's `not-stationary`); the API's results and
// the page list them, each led by its design's label.
import { readFileSync } from "node:fs";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";
import { startWorker, stopWorker, waitForOutput } from "../support/worker";

const reporter = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));

let worker: ReturnType<typeof startWorker>;
let ctx: BrowserContext;
let page: Page;
let me: Awaited<ReturnType<typeof newUser>>;
let comparisonId: string;
let results: { designs: { label: string; warnings: { code: string; field?: string }[] }[] };

beforeAll(async () => {
  worker = startWorker();
  await waitForOutput(worker, /worker ready/);
  me = await newUser("cmpwarn");
  const c = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...reporter, name: "Reporter (short window)" } });
  expect(c.status, c.text).toBe(201);
  const cmp = await me.client.request("POST", "/api/comparisons", {
    lab_id: me.labId, name: "Short window", launch: true,
    designs: [{ version_id: c.json.version_id, label: "as built" }, { version_id: c.json.version_id, label: "twice the mRNA", overrides: { km: 4 } }],
    settings: { t_end: 200, dt: 1, runs: 40 },
  });
  expect(cmp.status, cmp.text).toBe(201);
  comparisonId = cmp.json.id;
  const until = Date.now() + 150_000;
  for (;;) {
    const r = await me.client.request("GET", `/api/comparisons/${comparisonId}`);
    if (r.json.status === "succeeded") {
      results = r.json.results;
      break;
    }
    if (r.json.status === "failed" || Date.now() > until) throw new Error(`comparison ${r.json.status}: ${r.text.slice(0, 500)}\n${worker.output.join("").slice(-1500)}`);
    await new Promise((res) => setTimeout(res, 300));
  }
  ctx = await openBrowser();
  page = await ctx.newPage();
  await signInAs(page, me.email, me.password);
  await page.waitForURL(/\/labs\/\d+$/);
});

afterAll(async () => {
  await ctx?.close();
  if (worker) await stopWorker(worker);
});

describe("warnings on the comparison page", () => {
  it("each design's results carry its run's warnings in the API", () => {
    for (const d of results.designs) expect(d.warnings.map((w) => `${w.code}:${w.field}`), d.label).toContain("window-too-short:t_end");
  });

  it("the comparison page lists them, each led by its design", async () => {
    await page.goto(`/labs/${me.labId}/comparisons/${comparisonId}`);
    const list = page.getByTestId("comparison-warnings");
    await list.waitFor();
    const items = await list.locator('li[data-code="window-too-short"]').allTextContents();
    expect(items).toHaveLength(2);
    expect(items.some((t) => t.startsWith("as built: "))).toBe(true);
    expect(items.some((t) => t.startsWith("twice the mRNA: "))).toBe(true);
    await shot(page, "comparison-warnings");
  });
});
