// Measured data over a run (issue "lab data and team", overlay): a time series over the bands,
// a single-cell snapshot against the stationary distribution, measured CV and Fano beside the
// simulated noise table.
import { readFileSync } from "node:fs";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";
import { startWorker, stopWorker, waitForOutput } from "../support/worker";

let ctx: BrowserContext;
let page: Page;
let worker: ReturnType<typeof startWorker>;
let me: Awaited<ReturnType<typeof newUser>>;
let runId = "";
const reporter = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));

function upload(fields: Record<string, string>, csv: string, name: string): FormData {
  const f = new FormData();
  f.set("lab_id", me.labId);
  for (const [k, v] of Object.entries(fields)) f.set(k, v);
  f.set("file", new Blob([csv], { type: "text/csv" }), name);
  return f;
}

beforeAll(async () => {
  worker = startWorker({ WORKER_CONCURRENCY: "2" });
  await waitForOutput(worker, /worker ready/);
  me = await newUser("overlay");
  const c = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: reporter });
  const r = await me.client.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 400, dt: 2, runs: 300, burn_in: 200, seed: 77 });
  runId = r.json.id;
  // A measured time series of the protein (a.u.; 2 molecules per unit) and a snapshot of 6 cells (invented for this test).
  const series = "time,P\r\n0,0\r\n100,330\r\n200,430\r\n300,480\r\n400,500\r\n";
  expect((await me.client.request("POST", "/api/datasets", upload({ kind: "series", name: "Induction curve", time_unit: "min", amount_unit: "a.u.", molecules_per_unit: "2" }, series, "curve.csv"))).status).toBe(201);
  const snapshot = "P\r\n400\r\n450\r\n500\r\n520\r\n560\r\n610\r\n";
  expect((await me.client.request("POST", "/api/datasets", upload({ kind: "snapshot", name: "Plate snapshot", amount_unit: "a.u.", molecules_per_unit: "2" }, snapshot, "plate.csv"))).status).toBe(201);
  for (let i = 0; i < 600; i++) {
    if ((await me.client.request("GET", `/api/runs/${runId}`)).json.status === "succeeded") break;
    await new Promise((res) => setTimeout(res, 200));
  }
  ctx = await openBrowser();
  page = await ctx.newPage();
  await signInAs(page, me.email, me.password);
  await page.waitForURL(/\/labs\/\d+$/);
});
afterAll(async () => {
  await ctx?.close();
  await stopWorker(worker, "SIGKILL");
});

describe("measured data over a run", () => {
  it("a time series is drawn over the bands, in molecules", async () => {
    await page.goto(`/labs/${me.labId}/runs/${runId}`);
    await page.getByRole("group", { name: "Species shown in the charts" }).getByRole("button", { name: "P" }).click();
    const picker = page.getByTestId("overlay-picker").getByRole("combobox");
    await expect.poll(async () => (await picker.locator("option").allTextContents()).join("|")).toContain("Induction curve");
    await picker.selectOption({ label: "Induction curve (time series: P)" });
    const chart = page.getByTestId("bands-chart");
    await expect.poll(async () => chart.locator("svg g.mark-symbol.role-mark path").count()).toBe(5); // the five measured points (legend symbols are role-legend-symbol)
    await page.getByTestId("measured-noise").getByText("Measured: Induction curve").waitFor();
    await shot(page, "overlay-01-series");
  });

  it("a snapshot is laid against the stationary distribution, and its CV and Fano sit beside the noise table", async () => {
    const picker = page.getByTestId("overlay-picker").getByRole("combobox");
    await picker.selectOption({ label: "Plate snapshot (snapshot: P)" });
    const dist = page.getByTestId("distribution-chart");
    await expect.poll(async () => (await dist.locator("svg").textContent()) ?? "").toContain("P after burn-in against Plate snapshot");
    // Measured in molecules: 2 × (400, 450, 500, 520, 560, 610) → mean 1013.33…, sample SD 146.42… (by hand).
    const row = page.getByTestId("measured-noise").locator("tbody tr").first();
    const cells = await row.locator("td").allTextContents();
    expect(cells[0]).toBe("P");
    expect(Number(cells[1])).toBe(6);
    expect(Number(cells[2])).toBe(1013); // shown to 4 significant digits
    const sd = Math.sqrt([800, 900, 1000, 1040, 1120, 1220].reduce((a, x) => a + (x - 6080 / 6) ** 2, 0) / 5);
    expect(Number(cells[3])).toBeCloseTo(sd, 0);
    expect(Number(cells[4])).toBeCloseTo(sd / (6080 / 6), 2);
    await shot(page, "overlay-02-snapshot");
  });
});
