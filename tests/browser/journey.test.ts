// The whole journey of a new user, with no docs: sign up, write a circuit from a template,
// save a version, read its counts, launch a 1,000-cell ensemble, read its bands, period spread
// and noise, take the CSV and replay one cell (issue "modeler's screens", done-when).
import { readFileSync } from "node:fs";
import { randomUUID } from "node:crypto";

import type { BrowserContext, Download, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot } from "../support/browser";
import { startWorker, stopWorker, waitForOutput } from "../support/worker";

let ctx: BrowserContext;
let page: Page;
let worker: ReturnType<typeof startWorker>;

async function download(p: Page, click: () => Promise<void>): Promise<{ name: string; text: string }> {
  const [dl] = await Promise.all([p.waitForEvent("download") as Promise<Download>, click()]);
  return { name: dl.suggestedFilename(), text: readFileSync(await dl.path(), "utf8") };
}

beforeAll(async () => {
  worker = startWorker({ WORKER_CONCURRENCY: "2" });
  await waitForOutput(worker, /worker ready/);
  ctx = await openBrowser();
  page = await ctx.newPage();
});
afterAll(async () => {
  await ctx?.close();
  await stopWorker(worker, "SIGKILL");
});

describe("a new user, from sign-up to a finished 1,000-cell ensemble", () => {
  const email = `journey-${randomUUID().slice(0, 8)}@test.example`;
  let seed = "";

  it("signs up and lands in a lab of their own", async () => {
    await page.goto("/");
    await page.getByRole("link", { name: "Create an account" }).click();
    await page.getByLabel("Name", { exact: true }).fill("Jo Journey");
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel(/^Password/).fill("a long enough password");
    await page.getByRole("button", { name: "Create account" }).click();
    await page.waitForURL(/\/labs\/\d+$/);
    await page.getByRole("heading", { name: "Jo Journey's lab" }).waitFor();
    expect(await page.getByTestId("role-badge").textContent()).toBe("owner");
  });

  it("writes the ring timer from its template, changes n and saves version 2", async () => {
    await page.getByRole("navigation", { name: "Sections" }).getByRole("link", { name: "Circuits" }).click();
    await page.getByRole("button", { name: "New circuit" }).click();
    await page.getByRole("radio", { name: "Ring timer" }).check();
    await page.getByRole("button", { name: "Create circuit" }).click();
    await page.waitForURL(/\/circuits\/\d+$/);
    await page.getByLabel("Value of n", { exact: true }).fill("5");
    await page.getByLabel("Message (optional)").fill("steeper promoters");
    await page.getByRole("button", { name: "Save version" }).click();
    await page.getByRole("status").filter({ hasText: "Saved as version 2." }).waitFor();
  });

  it("reads the counts view", async () => {
    await page.getByRole("navigation", { name: "Circuit views" }).getByRole("link", { name: "Counts view" }).click();
    // Ω = 1 fL · N_A · 1 nM (SI value of Avogadro's number)
    await expect.poll(() => page.getByTestId("omega").textContent()).toBe("Ω = 0.602214 molecules per nM");
    await shot(page, "journey-01-counts");
  });

  it("launches 1,000 cells and watches the run finish", async () => {
    await page.getByRole("link", { name: /Launch run of v2/ }).click();
    await page.waitForURL(/\/runs\/new\?version=\d+/);
    await page.getByLabel(/^End time/).fill("300");
    await page.getByLabel(/^Sampling step/).fill("1");
    await page.getByLabel("Cells").fill("1000");
    seed = await page.getByLabel("Seed").inputValue();
    await page.getByTestId("cost-estimate").getByText("of one thread").waitFor();
    await page.getByRole("button", { name: "Launch ensemble" }).click();
    await page.waitForURL(/\/runs\/\d+$/);
    await expect.poll(() => page.getByTestId("run-status").textContent(), { timeout: 240_000, interval: 500 }).toBe("succeeded");
  });

  it("reads the bands against the mean-field trace, the period spread and the noise table", async () => {
    const chart = page.getByTestId("bands-chart");
    await chart.locator("svg g.mark-area").first().waitFor();
    expect(await chart.locator("svg g.mark-area").count()).toBe(2); // 5–95% and 25–75% bands
    expect(await chart.locator("svg g.mark-line path").count()).toBe(3); // median, mean, mean-field trace
    expect((await chart.locator("svg").textContent()) ?? "").toContain("A: 1000 cells against the mean-field trace");
    await page.getByTestId("period-spread").locator("svg g.mark-rect").first().waitFor();
    expect(await page.getByTestId("noise-table").locator("tbody tr").count()).toBe(3);
    await shot(page, "journey-02-results");
  });

  it("takes the bands CSV and replays cell #3 with the run's seed", async () => {
    const { text } = await download(page, () => page.getByRole("button", { name: "Download bands CSV" }).click());
    const rows = text.split("\r\n").filter(Boolean);
    expect(rows[0]).toBe("species,time_min,mean,sd,p05,p25,p50,p75,p95,mean_field,unit");
    expect(rows).toHaveLength(1 + 3 * 301);
    await page.getByLabel(/^Cell index/).fill("3");
    await page.getByRole("button", { name: "Replay cell" }).click();
    await page.getByTestId("replayed-cell").waitFor();
    expect(await page.getByTestId("replay-seed").textContent()).toBe(seed);
    expect(await page.getByTestId("replay-index").textContent()).toBe("#3");
  });
});
