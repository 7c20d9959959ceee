// Under the content security policy the charts still draw: a run page and a comparison page render
// their vega charts (SVG marks present) in Chromium, and the browser reports no policy violation
// and no page error on the way.
import { readFileSync } from "node:fs";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";
import { startWorker, stopWorker, waitForOutput, waitForRun } from "../support/worker";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));

let worker: ReturnType<typeof startWorker>;
let ctx: BrowserContext;
let page: Page;
let me: Awaited<ReturnType<typeof newUser>>;
let runId: string;
let comparisonId: string;
let circuitId: string;
const problems: string[] = [];

beforeAll(async () => {
  worker = startWorker();
  await waitForOutput(worker, /worker ready/);
  me = await newUser("csp");
  const c = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: { ...birthDeath, name: "Birth and death (CSP)" } });
  expect(c.status, c.text).toBe(201);
  circuitId = c.json.id;
  const r = await me.client.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 60, dt: 1, runs: 50, burn_in: 20 });
  expect(r.status, r.text).toBe(202);
  runId = r.json.id;
  const cmp = await me.client.request("POST", "/api/comparisons", {
    lab_id: me.labId, name: "CSP comparison", launch: true,
    designs: [{ version_id: c.json.version_id, label: "k = 10" }, { version_id: c.json.version_id, label: "k = 40", overrides: { k: 40 } }],
    settings: { t_end: 60, dt: 1, runs: 20, burn_in: 20 },
  });
  expect(cmp.status, cmp.text).toBe(201);
  comparisonId = cmp.json.id;
  expect((await waitForRun(me.client, runId)).status).toBe("succeeded");
  const until = Date.now() + 120_000;
  while ((await me.client.request("GET", `/api/comparisons/${comparisonId}`)).json.status !== "succeeded") {
    if (Date.now() > until) throw new Error(`comparison not done:\n${worker.output.join("").slice(-2000)}`);
    await new Promise((res) => setTimeout(res, 300));
  }
  ctx = await openBrowser();
  // Every violation the page sees, reported through the console where the test listens.
  await ctx.addInitScript(() => {
    document.addEventListener("securitypolicyviolation", (e) => console.error(`securitypolicyviolation ${e.violatedDirective} ${e.blockedURI} at ${e.sourceFile}:${e.lineNumber}:${e.columnNumber} sample=${e.sample}`));
  });
  page = await ctx.newPage();
  page.on("console", (m) => {
    if (m.type() === "error" && /securitypolicyviolation|Content Security Policy/i.test(m.text())) problems.push(`console: ${m.text()}`);
  });
  page.on("pageerror", (e) => problems.push(`pageerror: ${e.message}`));
  await signInAs(page, me.email, me.password);
  await page.waitForURL(/\/labs\/\d+$/);
});

afterAll(async () => {
  await ctx?.close();
  if (worker) await stopWorker(worker);
});

describe("charts under the content security policy", () => {
  it("the run page draws its bands, period and sample-cell charts with no violation", async () => {
    const res = await page.goto(`/labs/${me.labId}/runs/${runId}`);
    expect(res?.headers()["content-security-policy"]).toMatch(/script-src 'self' 'nonce-/);
    const chart = page.getByTestId("bands-chart");
    await chart.locator("svg g.mark-area").first().waitFor();
    expect(await chart.locator("svg g.mark-area").count()).toBeGreaterThan(0);
    await page.locator("section", { has: page.getByRole("heading", { name: "Sample cells" }) }).locator("svg g.mark-line").first().waitFor();
    expect(await page.getByRole("alert").filter({ hasText: "could not be drawn" }).count()).toBe(0);
    await shot(page, "csp-01-run");
    expect(problems).toEqual([]);
  });

  it("the comparison page draws its intervals and bands charts with no violation", async () => {
    await page.goto(`/labs/${me.labId}/comparisons/${comparisonId}`);
    await page.getByTestId("chart-intervals").locator("svg .mark-symbol path").first().waitFor();
    await page.getByTestId("chart-bands").locator("svg .mark-area path").first().waitFor({ timeout: 30_000 });
    expect(await page.getByRole("alert").filter({ hasText: "could not be drawn" }).count()).toBe(0);
    await shot(page, "csp-02-comparison");
    expect(problems).toEqual([]);
  });

  it("the stability page draws its eigenvalue chart, and client navigation keeps working", async () => {
    await page.goto(`/labs/${me.labId}/circuits/${circuitId}/stability`);
    await page.locator("figure svg .mark-symbol path").first().waitFor();
    await page.getByRole("link", { name: "Runs", exact: true }).first().click();
    await page.waitForURL(/\/runs$/);
    expect(problems).toEqual([]);
  });
});
