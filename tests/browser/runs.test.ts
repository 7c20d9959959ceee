// The runs screens in Debian Chromium against the built app and a real worker: launcher, live
// progress, bands, noise table, period spread, replay, downloads, cancel, failure, roles, tablet.
import { readFileSync } from "node:fs";

import type { BrowserContext, Download, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { Client } from "../support/client";
import { startWorker, stopWorker, waitForOutput, waitForRun } from "../support/worker";

const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
const PASSWORD = "sentinel-demo";

let worker: ReturnType<typeof startWorker>;
let modeler: Client;
let labId: string;
let versionId: string;
let circuitId: string;
let ctx: BrowserContext;
let page: Page;
let runId: string; // the 100-cell ensemble launched from the page
let seed: number;

async function download(p: Page, click: () => Promise<void>): Promise<{ name: string; text: string }> {
  const [dl] = await Promise.all([p.waitForEvent("download") as Promise<Download>, click()]);
  const path = await dl.path();
  return { name: dl.suggestedFilename(), text: readFileSync(path, "utf8") };
}

const csvRows = (text: string) => text.split("\r\n").filter((l) => l.length > 0);

beforeAll(async () => {
  worker = startWorker({ WORKER_CONCURRENCY: "2" });
  await waitForOutput(worker, /worker ready/);
  modeler = new Client();
  expect(await modeler.signIn("modeler@sentinel.example", PASSWORD)).toBe(true);
  labId = (await modeler.request("GET", "/api/labs")).json.labs.find((l: any) => l.name === "Soil Sentinel").id;
  const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...ringTimer, name: `Ring timer (runs screens ${Date.now()})` } });
  expect(c.status, c.text).toBe(201);
  versionId = c.json.version_id;
  circuitId = c.json.id;
  ctx = await openBrowser();
  page = await ctx.newPage();
  await signInAs(page, "modeler@sentinel.example", PASSWORD);
  await page.waitForURL(/\/labs\/\d+$/);
});

afterAll(async () => {
  await ctx?.close();
  if (worker) await stopWorker(worker, "SIGKILL");
});

describe("the modeler launches an ensemble and reads its results", () => {
  it("the version picker leads from circuit to version to the launcher", async () => {
    await page.goto(`/labs/${labId}/runs/new`);
    await page.getByLabel("Circuit", { exact: true }).selectOption(circuitId);
    await expect.poll(() => page.getByLabel("Version", { exact: true }).inputValue()).toBe(versionId); // the latest version by default
    await page.getByRole("button", { name: "Continue to settings" }).click();
    await page.waitForURL(/\/runs\/new\?version=\d+/);
    expect(new URL(page.url()).searchParams.get("version")).toBe(versionId);
  });

  it("the launcher fills in a random seed, shows the expected cost and launches 100 cells", async () => {
    await page.goto(`/labs/${labId}/runs/new?version=${versionId}`);
    const seedInput = page.getByLabel("Seed");
    const firstSeed = await seedInput.inputValue();
    expect(firstSeed).toMatch(/^\d+$/);
    await page.getByRole("button", { name: "New seed" }).click();
    expect(await seedInput.inputValue()).not.toBe(firstSeed);
    await page.getByLabel(/^End time/).fill("200");
    await page.getByLabel(/^Sampling step/).fill("1");
    await page.getByLabel("Cells").fill("100");
    // Empty: the worker chooses it from the circuit's relaxation time (at least t_end / 5).
    expect(await page.getByLabel(/^Burn-in/).inputValue()).toBe("");
    await page.getByText(/Empty: 5 × the circuit's slowest relaxation time/).waitFor();
    const cost = page.getByTestId("cost-estimate");
    await cost.getByText("of one thread").waitFor();
    expect(await cost.textContent()).toMatch(/Events per cell.*× cells\s*100/s);
    // What the run takes of the queue budget, as the server will charge it: cells × (events per cell + 201 grid points).
    const budget = page.getByTestId("queue-budget");
    expect(await budget.textContent()).toMatch(/Lab[\d.]+( \w+)? queued of [\d.]+ \w+You, over all labs[\d.]+( \w+)? queued of [\d.]+ \w+/);
    const perCell = Number(((await cost.locator("dd").first().textContent()) ?? "").replace(/[^\d.]/g, ""));
    const charged = (await page.getByTestId("run-cell-events").textContent()) ?? "";
    const [, amount, word] = /^([\d.]+) (thousand|million)$/.exec(charged) ?? [];
    expect(Number(amount) * (word === "million" ? 1e6 : 1e3)).toBeCloseTo(100 * (perCell + 201), -4);
    await shot(page, "runs-01-launcher");
    seed = Number(await seedInput.inputValue());
    await page.getByRole("button", { name: "Launch ensemble" }).click();
    await page.waitForURL(/\/runs\/\d+$/);
    runId = page.url().split("/").pop()!;
    const launched = (await modeler.request("GET", `/api/runs/${runId}`)).json;
    expect(launched).toMatchObject({ seed, settings: { runs: 100, t_end: 200, dt: 1 } });
    expect(launched.settings.burn_in).toBeUndefined();
  });

  it("the run page follows the run to the end and then shows the results with the caution", async () => {
    const seen = new Set<string>();
    const until = Date.now() + 120_000;
    while (Date.now() < until) {
      const s = (await page.getByTestId("run-status").textContent()) ?? "";
      seen.add(s);
      if (s === "succeeded") break;
      await page.waitForTimeout(150);
    }
    expect([...seen].at(-1)).toBe("succeeded");
    // The page was opened before the worker finished, so it saw the run queued or running first.
    expect([...seen].some((s) => s === "queued" || s === "running")).toBe(true);
    await page.getByRole("note").filter({ hasText: "Simulated noise is what a model predicts" }).waitFor();
  });

  it("the bands chart draws both bands and the median, mean and mean-field lines, with a title and units", async () => {
    const chart = page.getByTestId("bands-chart");
    await chart.locator("svg g.mark-area").first().waitFor();
    expect(await chart.locator("svg g.mark-area").count()).toBe(2);
    expect(await chart.locator("svg g.mark-line path").count()).toBe(3); // median, mean, mean-field trace
    const text = (await chart.locator("svg").textContent()) ?? "";
    expect(text).toContain("A: 100 cells against the mean-field trace");
    expect(text).toContain("Time (min)");
    expect(text).toContain("A (molecules)");
    expect(text).toContain("Mean-field trace"); // legend
    await page.getByRole("group", { name: "Species shown in the charts" }).getByRole("button", { name: "C" }).click();
    await expect.poll(async () => (await chart.locator("svg").textContent()) ?? "").toContain("C: 100 cells");
    await page.getByRole("group", { name: "Species shown in the charts" }).getByRole("button", { name: "A" }).click();
  });

  it("the noise table and the period spread show the ensemble's numbers", async () => {
    const summary = (await modeler.request("GET", `/api/runs/${runId}/summary`)).json;
    const rows = page.getByTestId("noise-table").locator("tbody tr");
    expect(await rows.count()).toBe(3);
    const a = (await rows.first().locator("td").allTextContents());
    expect(Number(/^[\d.]+/.exec(a[0]!)?.[0])).toBeCloseTo(summary.stationary.A.mean, 1); // shown to 4 significant digits
    // The ring timer oscillates (no stable steady state): the burn-in stays t_end / 5.
    expect(summary.burn_in).toBe(40);
    // Each stationary number has its 95% interval over cells under it, as the summary has it.
    const ci = summary.stationary.A.ci;
    expect(ci.method).toBe("percentile bootstrap over cells, 1000 replicates");
    const fmt = (v: number) => String(Number(v.toPrecision(4)));
    for (const k of ["mean", "cv", "fano"]) {
      expect(await page.getByTestId(`ci-${k}-A`).textContent(), k).toBe(`[${fmt(ci[k][0])}, ${fmt(ci[k][1])}]`);
      expect(ci[k][0]).toBeLessThanOrEqual(summary.stationary.A[k]);
      expect(ci[k][1]).toBeGreaterThanOrEqual(summary.stationary.A[k]);
    }
    await page.getByTestId("ci-sd-C").waitFor();
    await page.getByTestId("noise-table").getByText("Under each number its 95% interval (percentile bootstrap over cells, 1000 replicates).", { exact: false }).waitFor();
    // The ring timer's steady state is unstable (it oscillates), so there is no LNA, and the page says why.
    await page.getByTestId("noise-table").getByText(/No LNA: the steady state .* is unstable/).waitFor();
    const period = page.getByTestId("period-spread");
    await period.getByRole("heading", { name: "Period spread" }).waitFor();
    expect(summary.period.A.count).toBeGreaterThan(0);
    expect(await period.locator("tbody tr").first().textContent()).toContain(String(summary.period.A.count.toLocaleString("en-US")));
    // The period's mean and CV carry their 95% interval over cells too, as the summary has it.
    const pci = summary.period.A.ci;
    expect(pci.method).toBe("percentile bootstrap over cells, 1000 replicates");
    for (const k of ["mean", "cv"]) {
      expect(await period.getByTestId(`period-ci-${k}-A`).textContent(), `period ${k}`).toBe(`[${fmt(pci[k][0])}, ${fmt(pci[k][1])}]`);
      expect(pci[k][0]).toBeLessThanOrEqual(summary.period.A[k]);
      expect(pci[k][1]).toBeGreaterThanOrEqual(summary.period.A[k]);
    }
    await period.locator("svg g.mark-rect").first().waitFor(); // histogram bars
    await page.locator("section", { has: page.getByRole("heading", { name: "Sample cells" }) }).locator("svg g.mark-line").first().waitFor();
    // The stationary distribution is the whole ensemble's exact tally, not the sample cells.
    const dist = page.getByTestId("distribution-chart");
    await expect.poll(async () => (await dist.locator("svg").textContent()) ?? "").toContain("A after burn-in, all 100 cells");
    const total = summary.stationary_distribution.A.counts.reduce((x: number, y: number) => x + y, 0);
    expect(total).toBe(100 * summary.times.filter((t: number) => t >= summary.burn_in).length);
    await shot(page, "runs-02-results-laptop");
  });

  it("replay cell #3 shows (seed, 3) and its CSV equals GET /api/runs/:id/cells/3", async () => {
    await page.getByLabel(/^Cell index/).fill("3");
    await page.getByRole("button", { name: "Replay cell" }).click();
    await page.getByTestId("replayed-cell").waitFor();
    expect(await page.getByTestId("replay-seed").textContent()).toBe(String(seed));
    expect(await page.getByTestId("replay-index").textContent()).toBe("#3");
    await page.getByTestId("replayed-cell").locator("svg g.mark-line").first().waitFor();
    const api = (await modeler.request("GET", `/api/runs/${runId}/cells/3`)).json;
    const { name, text } = await download(page, () => page.getByRole("button", { name: "Download cell CSV" }).click());
    expect(name).toBe(`run-${runId}-cell-3.csv`);
    const rows = csvRows(text);
    expect(rows[0]).toBe("seed,cell,time_min,A,B,C");
    expect(rows).toHaveLength(1 + api.times.length);
    rows.slice(1).forEach((line, g) => {
      const [s, i, t, A, B, C] = line.split(",").map(Number);
      expect([s, i, t]).toEqual([seed, 3, api.times[g]]);
      expect([A, B, C]).toEqual([api.values.A[g], api.values.B[g], api.values.C[g]]);
    });
  });

  it("the bands CSV has the documented header and one row per species and grid time", async () => {
    const { name, text } = await download(page, () => page.getByRole("button", { name: "Download bands CSV" }).click());
    expect(name).toBe(`run-${runId}-bands.csv`);
    const rows = csvRows(text);
    expect(rows[0]).toBe("species,time_min,mean,sd,p05,p25,p50,p75,p95,mean_field,unit");
    expect(rows).toHaveLength(1 + 3 * 201);
    const noise = await download(page, () => page.getByRole("button", { name: "Download noise table CSV" }).click());
    const noiseRows = csvRows(noise.text);
    expect(noiseRows).toHaveLength(4);
    // The intervals travel with the export: bounds, level and method in columns of their own.
    expect(noiseRows[0]).toContain(",unit,stationary_mean_lo,stationary_mean_hi,stationary_sd_lo,");
    expect(noiseRows[0]).toMatch(/,final_fano_hi,ci_level,ci_method$/);
    const summary = (await modeler.request("GET", `/api/runs/${runId}/summary`)).json;
    expect(noiseRows[1]).toContain(`,${summary.stationary.A.ci.mean[0]},${summary.stationary.A.ci.mean[1]},`);
    expect(noiseRows[1]).toMatch(/,0\.95,"percentile bootstrap over cells, 1000 replicates"$/);
    const svg = await download(page, () => page.getByTestId("bands-chart").getByRole("button", { name: /^SVG of/ }).click());
    expect(svg.name).toBe(`run-${runId}-bands-A.svg`);
    expect(svg.text).toMatch(/^<svg[\s\S]*mark-area/);
    const png = await download(page, () => page.getByTestId("bands-chart").getByRole("button", { name: /^PNG of/ }).click());
    expect(png.name).toBe(`run-${runId}-bands-A.png`);
  });

  it("run again exactly launches the same version, settings and seed, and gives identical statistics", async () => {
    await page.getByRole("button", { name: "Run again exactly" }).click();
    await page.waitForURL((u) => /\/runs\/\d+$/.test(u.pathname) && !u.pathname.endsWith(`/${runId}`));
    const again = page.url().split("/").pop()!;
    const done = await waitForRun(modeler, again, (r) => r.status !== "queued" && r.status !== "running", 120_000);
    expect(done).toMatchObject({ status: "succeeded", seed, version_id: versionId, method: "ssa", settings: { runs: 100, t_end: 200, dt: 1 } });
    const [a, b] = await Promise.all([runId, again].map((id) => modeler.request("GET", `/api/runs/${id}/summary`)));
    for (const k of ["mean", "sd", "quantiles", "stationary", "period"]) expect(b.json[k]).toEqual(a.json[k]);
  });
});

describe("errors, cancel and failure", () => {
  it("a sampling step above the end time is flagged at the dt field and nothing is launched", async () => {
    const before = (await modeler.request("GET", `/api/runs?lab_id=${labId}&limit=1`)).json.total;
    await page.goto(`/labs/${labId}/runs/new?version=${versionId}`);
    await page.getByLabel(/^End time/).fill("10");
    await page.getByLabel(/^Sampling step/).fill("20");
    await page.getByRole("button", { name: "Launch ensemble" }).click();
    await page.getByText("must be <= t_end (10)").waitFor();
    expect(await page.getByLabel(/^Sampling step/).getAttribute("aria-invalid")).toBe("true");
    expect(new URL(page.url()).pathname).toBe(`/labs/${labId}/runs/new`);
    expect((await modeler.request("GET", `/api/runs?lab_id=${labId}&limit=1`)).json.total).toBe(before);
  });

  it("an override the server rejects (n = -2) is shown under the overrides", async () => {
    await page.goto(`/labs/${labId}/runs/new?version=${versionId}`);
    await page.getByRole("button", { name: "Add override" }).click();
    await page.getByLabel("Parameter of override 1").selectOption("n");
    expect(await page.getByText("saved value 4").count()).toBe(1);
    await page.getByLabel("Value of n").fill("-2");
    await page.getByTestId("cost-estimate").getByText(/Cannot estimate/).waitFor(); // the browser's compile check
    await page.getByRole("button", { name: "Launch ensemble" }).click();
    await page.getByText(/rate\.n: must be > 0 .*after overrides/).first().waitFor();
    await shot(page, "runs-03-launcher-error");
  });

  it("tau-leaping shows the leap tolerance ε: 0.5 is flagged at the field, 0.1 is launched and shown in the provenance", async () => {
    await page.goto(`/labs/${labId}/runs/new?version=${versionId}`);
    expect(await page.getByLabel(/^Leap tolerance/).count()).toBe(0); // only for tau
    await page.getByLabel(/^Tau-leaping/).check();
    const eps = page.getByLabel(/^Leap tolerance/);
    expect(await eps.inputValue()).toBe("0.05");
    await page.getByLabel(/^End time/).fill("20");
    await page.getByLabel(/^Cells/).fill("10");
    await eps.fill("0.5");
    await page.getByRole("button", { name: "Launch ensemble" }).click();
    await page.getByText("must be at most 0.2").waitFor();
    expect(await eps.getAttribute("aria-invalid")).toBe("true");
    await eps.fill("0.1");
    await page.getByRole("button", { name: "Launch ensemble" }).click();
    await page.waitForURL(/\/runs\/\d+$/);
    const id = page.url().split("/").pop()!;
    expect((await modeler.request("GET", `/api/runs/${id}`)).json.settings.tau_epsilon).toBe(0.1);
    const provenance = page.locator("dt", { hasText: "Leap tolerance ε" }).locator("xpath=following-sibling::dd[1]");
    await provenance.waitFor();
    expect(await provenance.innerText()).toBe("0.1");
  });

  it("a long run shows live progress; the reviewer cannot cancel it and the modeler cancels it from the page", async () => {
    const r = await modeler.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 2000, dt: 1, runs: 4000, seed: 5 });
    expect(r.status, r.text).toBe(202);
    const longId = r.json.id;
    await waitForRun(modeler, longId, (x) => x.status === "running", 60_000);

    const reviewerCtx = await openBrowser();
    try {
      const rp = await reviewerCtx.newPage();
      await signInAs(rp, "reviewer@sentinel.example", PASSWORD);
      await rp.waitForURL(/\/labs\/\d+$/);
      await rp.goto(`/labs/${labId}/runs/${longId}`);
      await rp.getByRole("progressbar", { name: "Run progress" }).waitFor();
      expect(await rp.getByRole("button", { name: "Cancel run" }).count()).toBe(0);
      expect(await rp.getByRole("button", { name: "Run again exactly" }).count()).toBe(0);
    } finally {
      await reviewerCtx.close();
    }

    await page.goto(`/labs/${labId}/runs/${longId}`);
    await page.getByRole("progressbar", { name: "Run progress" }).waitFor();
    await page.getByText(/of 4\u2009000 cells/).waitFor(); // thin-space grouping
    await shot(page, "runs-04-running");
    await page.getByRole("button", { name: "Cancel run" }).click();
    await page.getByRole("button", { name: "Yes, cancel the run" }).click();
    await page.getByRole("heading", { name: "This run was cancelled" }).waitFor();
    expect(await page.getByTestId("run-status").textContent()).toBe("cancelled");
    expect((await modeler.request("GET", `/api/runs/${longId}`)).json.status).toBe("cancelled");
    expect(await page.getByRole("progressbar", { name: "Run progress" }).count()).toBe(0);
  });

  it("a trace run shows the mean-field paths, the noise table and no cells", async () => {
    const r = await modeler.request("POST", "/api/runs", { version_id: versionId, method: "ode", t_end: 200, dt: 1 });
    expect(r.status, r.text).toBe(202);
    await waitForRun(modeler, r.json.id, (x) => x.status === "succeeded", 60_000);
    await page.goto(`/labs/${labId}/runs/${r.json.id}`);
    const chart = page.getByTestId("trace-chart");
    await chart.locator("svg g.mark-line path").first().waitFor();
    expect(await chart.locator("svg").textContent()).toContain("Amount (nM)"); // a trace reports in the circuit's units
    await page.getByTestId("noise-table").waitFor();
    expect(await page.getByRole("heading", { name: "Replay a cell" }).count()).toBe(0);
    expect(await page.getByTestId("bands-chart").count()).toBe(0);
  });

  it("a run with overrides sets the LNA, computed with those overrides, beside the ensemble (birth–death: Fano 1, CV 1/√(k/g))", async () => {
    // Birth–death is Poisson at stationarity, and the LNA is exact for it (textbook): with k = 20, g = 0.1
    // the mean is 200, so CV = 1/√200 = 0.07071 and Fano = 1.
    const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...birthDeath, name: `Birth-death (runs screens ${Date.now()})` } });
    expect(c.status, c.text).toBe(201);
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 100, dt: 1, runs: 100, seed: 11, overrides: { k: 20 } });
    expect(r.status, r.text).toBe(202);
    await waitForRun(modeler, r.json.id, (x) => x.status === "succeeded", 60_000);
    await page.goto(`/labs/${labId}/runs/${r.json.id}`);
    const table = page.getByTestId("noise-table");
    await table.getByText("with this run's overrides").waitFor();
    await expect.poll(async () => (await table.locator("tbody tr").first().locator("td").allTextContents()).slice(4)).toEqual(["0.07071", "1"]);
    expect(await page.getByText("k = 20").count()).toBe(1); // provenance lists the override
  });

  it("a run of a circuit with a schedule lists the changes that fired and marks them on the bands chart", async () => {
    const induced = JSON.parse(readFileSync("examples/two-stage-reporter-induction.circuit.json", "utf8"));
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...induced, name: `Induction (runs screens ${Date.now()})` } });
    expect(c.status, c.text).toBe(201);
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 300, dt: 5, runs: 50, seed: 12, burn_in: 150 });
    expect(r.status, r.text).toBe(202);
    await waitForRun(modeler, r.json.id, (x) => x.status === "succeeded", 60_000);
    await page.goto(`/labs/${labId}/runs/${r.json.id}`);
    const changes = page.getByTestId("schedule-changes");
    await changes.waitFor();
    expect(await changes.textContent()).toContain("at 100 min: km = 2");
    const chart = page.getByTestId("bands-chart");
    await chart.locator("svg g.mark-line path").first().waitFor();
    // The dotted rule of the change at 100 min, and the subtitle that says what it is.
    expect(await chart.locator("svg g.mark-rule line").count()).toBeGreaterThanOrEqual(1);
    expect(await chart.locator("svg").textContent()).toContain("dotted lines: scheduled changes");
  });

  it("a failed run shows its reason", async () => {
    // A birth with no bound on its rate: the cell passes the engine's event cap and the run fails.
    const runaway = {
      format: "burstwise.circuit/1", name: `Runaway (runs screens ${Date.now()})`, units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }], parameters: { k: 1e9 },
      reactions: [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }, { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: 1 } }],
    };
    const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: runaway });
    expect(c.status, c.text).toBe(201);
    const r = await modeler.request("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 100, dt: 1, runs: 1, seed: 1 });
    const failed = await waitForRun(modeler, r.json.id, (x) => x.status === "failed" || x.status === "succeeded", 150_000);
    expect(failed.status).toBe("failed");
    await page.goto(`/labs/${labId}/runs/${r.json.id}`);
    await page.getByRole("heading", { name: "This run failed" }).waitFor();
    expect(await page.getByTestId("run-error").textContent()).toBe(failed.error);
    expect(failed.error).toMatch(/event/);
    await shot(page, "runs-05-failed");
  });
});

describe("lists and roles", () => {
  it("the runs list shows the lab's runs and filters them by status", async () => {
    await page.goto(`/labs/${labId}/runs`);
    const table = page.getByRole("table", { name: "Runs of this lab" });
    await table.waitFor();
    await table.getByRole("link", { name: `#${runId}` }).waitFor();
    // a count such as "1 000" stays on one line in the Cells column
    const cellsIndex = (await table.getByRole("columnheader").allTextContents()).indexOf("Cells");
    expect(cellsIndex).toBeGreaterThan(0);
    const cellsColumn = table.locator(`tbody tr td:nth-child(${cellsIndex + 1})`);
    expect(await cellsColumn.first().evaluate((el) => getComputedStyle(el).whiteSpace)).toBe("nowrap");
    await page.getByLabel("Status").selectOption("cancelled");
    await page.waitForURL(/status=cancelled/);
    await expect.poll(async () => (await table.getByTestId("run-status").allTextContents()).join(",")).toMatch(/^cancelled(,cancelled)*$/);
    await page.getByLabel("Status").selectOption("succeeded");
    await page.waitForURL(/status=succeeded/);
    await expect.poll(async () => (await table.getByTestId("run-status").allTextContents()).every((s) => s === "succeeded")).toBe(true);
    expect(await page.getByRole("link", { name: "New run" }).count()).toBe(1);
    await shot(page, "runs-06-list");
  });

  it("the reviewer reads runs with no launch, cancel or run-again controls, and the API refuses a launch", async () => {
    const rctx = await openBrowser({ width: 768, height: 1024 });
    try {
      const rp = await rctx.newPage();
      await signInAs(rp, "reviewer@sentinel.example", PASSWORD);
      await rp.waitForURL(/\/labs\/\d+$/);
      await rp.goto(`/labs/${labId}/runs`);
      await rp.getByRole("table", { name: "Runs of this lab" }).waitFor();
      expect(await rp.getByRole("link", { name: "New run" }).count()).toBe(0);
      await rp.goto(`/labs/${labId}/runs/new?version=${versionId}`);
      await rp.getByTestId("read-only-notice").waitFor();
      expect(await rp.getByRole("button", { name: /Launch/ }).count()).toBe(0);
      await rp.goto(`/labs/${labId}/runs/${runId}`);
      await rp.getByTestId("bands-chart").locator("svg g.mark-area").first().waitFor();
      await rp.getByTestId("noise-table").waitFor();
      expect(await rp.getByRole("button", { name: "Run again exactly" }).count()).toBe(0);
      expect(await rp.getByRole("button", { name: "Download bands CSV" }).count()).toBe(1); // reviewers download
      const overflow = await rp.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      expect(overflow).toBeLessThanOrEqual(0);
      await shot(rp, "runs-07-reviewer-tablet");
    } finally {
      await rctx.close();
    }
    const reviewer = new Client();
    expect(await reviewer.signIn("reviewer@sentinel.example", PASSWORD)).toBe(true);
    const r = await reviewer.request("POST", "/api/runs", { version_id: versionId, method: "ssa", t_end: 10, dt: 1, runs: 1 });
    expect(r.status).toBe(403);
  });
});

describe("tablet width", () => {
  it("the launcher and a finished run fit 768 px without sideways scrolling", async () => {
    await page.setViewportSize({ width: 768, height: 1024 });
    try {
      for (const [path, name] of [[`/labs/${labId}/runs/new?version=${versionId}`, "runs-08-launcher-tablet"], [`/labs/${labId}/runs/${runId}`, "runs-09-results-tablet"]] as const) {
        await page.goto(path);
        if (name === "runs-08-launcher-tablet") await page.getByTestId("cost-estimate").getByText("of one thread").waitFor();
        else await page.getByTestId("bands-chart").locator("svg g.mark-area").first().waitFor();
        const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
        expect(overflow).toBeLessThanOrEqual(0);
        await shot(page, name);
      }
    } finally {
      await page.setViewportSize({ width: 1280, height: 800 });
    }
  });
});
