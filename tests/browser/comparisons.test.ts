// Comparisons in Chromium: set up a two-design comparison in the form, run it with a real worker,
// read the noise table and the charts, download the CSV, run the difference test; a reviewer
// opens the demo lab's ring-timer comparison and reads which design keeps the most precise period.
import { readFile } from "node:fs/promises";
import { readFileSync } from "node:fs";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { Client } from "../support/client";
import { startWorker, stopWorker, waitForOutput } from "../support/worker";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
const NAME = `Birth and death, comparisons ${Date.now().toString(36)}`;

let ctx: BrowserContext;
let page: Page;
let labId: string;
let worker: ReturnType<typeof startWorker>;

beforeAll(async () => {
  const modeler = new Client();
  expect(await modeler.signIn("modeler@sentinel.example", "sentinel-demo")).toBe(true);
  labId = (await modeler.request("GET", "/api/labs")).json.labs.find((l: { name: string }) => l.name === "Soil Sentinel").id;
  const c = await modeler.request("POST", "/api/circuits", { lab_id: labId, circuit: { ...birthDeath, name: NAME } });
  expect(c.status, c.text).toBe(201);
  worker = startWorker();
  await waitForOutput(worker, /worker ready/);
  ctx = await openBrowser();
  page = await ctx.newPage();
});

afterAll(async () => {
  await ctx?.close();
  if (worker) await stopWorker(worker);
});

describe("comparisons in Chromium", () => {
  it("a modeler sets up a two-design comparison in the form and runs it", async () => {
    await signInAs(page, "modeler@sentinel.example", "sentinel-demo");
    await page.waitForURL(/\/labs\/\d+$/);
    await page.goto(`/labs/${labId}/comparisons`);
    await page.getByRole("link", { name: "New comparison" }).click();
    await page.getByLabel("Name", { exact: true }).fill("Production rate, two designs");
    const option = page.locator("#d-1-v option", { hasText: NAME });
    const value = await option.getAttribute("value");
    await page.getByLabel("Design 1: circuit").selectOption(value!);
    await page.getByLabel("Design 2: circuit").selectOption(value!);
    await page.getByLabel("Design 1: label").fill("k = 10");
    await page.getByLabel("Design 2: label").fill("k = 40");
    await page.getByLabel("Design 2: parameters changed").fill("k=40");
    await page.getByLabel("End time", { exact: true }).fill("150");
    await page.getByLabel("Cells per design").fill("100");
    await page.getByLabel(/^Burn-in/).fill("50");
    await shot(page, "comparisons-01-form");
    // A bad entry is named before anything is sent.
    await page.getByLabel("Cells per design").fill("3");
    await page.getByRole("button", { name: "Create and run" }).click();
    expect(await page.getByTestId("form-error").textContent()).toMatch(/^settings\.runs: must be >= 10/);
    await page.getByLabel("Cells per design").fill("100");
    await page.getByRole("button", { name: "Create and run" }).click();
    await page.waitForURL(/\/comparisons\/\d+$/);
    expect(await page.getByRole("row", { name: /k = 40/ }).count()).toBeGreaterThan(0);
  });

  it("the comparison page shows progress, then the noise table with intervals and the charts", async () => {
    await shot(page, "comparisons-02a-progress");
    try {
      await expect.poll(() => page.getByTestId("comparison-status").textContent(), { timeout: 120_000, interval: 500 }).toMatch(/succeeded|failed|cancelled/);
    } catch (e) {
      throw new Error(`comparison still running; the worker said:\n${worker.output.join("").slice(-4000)}`, { cause: e });
    }
    if ((await page.getByTestId("comparison-status").textContent()) !== "succeeded") await shot(page, "comparisons-02x-not-succeeded");
    expect(await page.getByTestId("comparison-status").textContent(), await page.locator("main").textContent() ?? "").toBe("succeeded");
    await page.getByTestId("comparison-noise-table").waitFor();
    const rows = page.getByTestId("comparison-noise-table").locator("tbody tr");
    expect(await rows.count()).toBe(2);
    expect(await rows.nth(1).textContent()).toMatch(/k = 40/);
    await page.getByRole("note").filter({ hasText: "Prediction, not measurement" }).waitFor();
    // The dot-and-whisker chart draws one point per design; the bands chart one area per design.
    await page.getByTestId("chart-intervals").locator("svg .mark-symbol path").first().waitFor();
    expect(await page.getByTestId("chart-intervals").locator("svg .mark-symbol path").count()).toBeGreaterThanOrEqual(2);
    await page.getByTestId("chart-bands").locator("svg .mark-area path").first().waitFor({ timeout: 30_000 });
    await shot(page, "comparisons-02-results");
  });

  it("the noise table downloads as CSV, one row per design", async () => {
    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: /CSV/ }).click()]);
    expect(download.suggestedFilename()).toMatch(/^comparison-\d+-noise-table\.csv$/);
    const lines = (await readFile((await download.path())!, "utf8")).trim().split("\r\n");
    expect(lines).toHaveLength(3);
    expect(lines[0]).toMatch(/^design,design_id,.*,cv,cv_lo,cv_hi,/);
    expect(lines[2]).toMatch(/^k = 40,/);
  });

  it("the difference test answers whether k = 40 is less noisy than k = 10, with the caveat", async () => {
    await page.getByLabel("Design A").selectOption({ label: "k = 10" });
    await page.getByLabel("Design B").selectOption({ label: "k = 40" });
    await page.getByRole("button", { name: "Test", exact: true }).click();
    await page.getByTestId("test-result").waitFor();
    // Poisson: CV 1/√100 = 0.1 against 1/√400 = 0.05 (textbook), far apart with 100 cells.
    expect(await page.getByTestId("verdict-cv").textContent()).toBe("Yes: B's CV is lower than A's.");
    expect(await page.getByRole("note").filter({ hasText: "not that cells built in the lab will differ" }).count()).toBe(1);
    await shot(page, "comparisons-03-test");
  });

  it("a sweep set up in the form previews its designs, names a bad log bound, and saves as a draft", async () => {
    await page.goto(`/labs/${labId}/comparisons/new`);
    await page.getByLabel("Name", { exact: true }).fill("Production rate sweep (draft)");
    await page.getByLabel(/A sweep of one parameter/).check();
    const option = page.locator("#s-base option", { hasText: NAME });
    await page.getByLabel("Circuit swept").selectOption((await option.getAttribute("value"))!);
    await page.locator("#a-0-p option", { hasText: "k (now" }).waitFor({ state: "attached" });
    await page.getByLabel("Swept parameter").selectOption("k");
    await page.getByLabel("From", { exact: true }).fill("0");
    await page.getByLabel("To", { exact: true }).fill("80");
    await page.getByLabel("Points", { exact: true }).fill("3");
    await expect.poll(() => page.getByTestId("sweep-preview").textContent()).toBe("sweep.axes[0].from: must be > 0 on a log range");
    await page.getByLabel("From", { exact: true }).fill("5");
    await expect.poll(() => page.getByTestId("sweep-preview").textContent()).toBe("This sweep gives 3 designs: k = 5 · k = 20 · k = 80");
    await page.getByLabel("End time", { exact: true }).fill("200");
    await page.getByLabel("Cells per design").fill("100");
    await shot(page, "comparisons-05-sweep-form");
    await page.getByRole("button", { name: "Save as draft" }).click();
    await page.waitForURL(/\/comparisons\/\d+$/);
    expect(await page.getByTestId("comparison-status").textContent()).toBe("draft");
    expect(await page.getByTestId("design-progress").count()).toBe(3);
    // Run it from the page: the sweep's charts put CV against k on log axes with the LNA curve.
    await page.getByRole("button", { name: "Run all designs" }).click();
    await expect.poll(() => page.getByTestId("comparison-status").textContent(), { timeout: 120_000, interval: 500 }).toBe("succeeded");
    await page.getByTestId("chart-sweep-cv").locator("svg .mark-line path").first().waitFor();
    expect(await page.getByTestId("chart-sweep-cv").textContent()).toMatch(/dashed: LNA prediction; log axes/);
    await shot(page, "comparisons-06-sweep-results");
  });

  it("a reviewer opens the demo lab's ring-timer comparison and reads which design keeps the most precise period", async () => {
    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/signin/);
    await signInAs(page, "reviewer@sentinel.example", "sentinel-demo");
    await page.waitForURL(/\/labs\/\d+$/);
    await page.goto(`/labs/${labId}/comparisons`);
    expect(await page.getByRole("link", { name: "New comparison" }).count()).toBe(0);
    await page.getByRole("link", { name: /Ring timer: which design keeps time best/ }).click();
    await page.getByTestId("comparison-noise-table").waitFor({ timeout: 150_000 });
    expect(await page.getByRole("button", { name: /Run all designs|Run again|Cancel|Delete/ }).count()).toBe(0);
    // Five-fold more molecules at the same concentrations: the relative spread of the period shrinks
    // roughly as 1/√Ω (SCIENCE.md, common practice), so that design should be the most precise.
    expect(await page.getByTestId("best-period_cv").textContent()).toBe("5× molecules (5 fL)");
    expect(await page.getByTestId("comparison-noise-table").locator("tbody tr").count()).toBe(4);
    await page.getByTestId("chart-intervals").locator("svg .mark-symbol path").first().waitFor();
    await shot(page, "comparisons-04-demo-reviewer");
  });
});
