import { readFileSync } from "node:fs";

import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";

const twoStage = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));

let owner: Awaited<ReturnType<typeof newUser>>;
let modeler: Awaited<ReturnType<typeof newUser>>;
let reviewer: Awaited<ReturnType<typeof newUser>>;
let ctx: BrowserContext;
let page: Page;
let datasetUrl = "";

// An invented induction curve: two reporters every 15 min, in a.u.
const SERIES = ["time,gfp,mcherry", ...Array.from({ length: 25 }, (_, i) => `${i * 15},${(200 * (1 - Math.exp(-i / 6)) + (i % 3) * 4).toFixed(1)},${(80 + (i % 4) * 3).toFixed(1)}`)].join("\n") + "\n";
// An invented snapshot: 300 cells' fluorescence.
const SNAPSHOT = ["gfp", ...Array.from({ length: 300 }, (_, i) => String(500 + ((i * 7919) % 400)))].join("\n") + "\n";

beforeAll(async () => {
  [owner, modeler, reviewer] = await Promise.all([newUser("DataOwner"), newUser("DataModeler"), newUser("DataReviewer")]);
  for (const [u, role] of [[modeler, "modeler"], [reviewer, "reviewer"]] as const) {
    await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: u.email, role });
  }
  ctx = await openBrowser();
  page = await ctx.newPage();
});
afterAll(async () => {
  await ctx?.close();
});

async function switchUser(u: { email: string; password: string }) {
  await ctx.clearCookies();
  await signInAs(page, u.email, u.password);
  await page.waitForURL(/\/labs\/\d+$/);
}

describe("the Data page in Chromium", () => {
  it("a modeler uploads a time series: the browser checks the file first, then the dataset page shows chart and spread", async () => {
    await switchUser(modeler);
    await page.goto(`/labs/${owner.labId}/data`);
    await page.getByRole("heading", { name: "No datasets yet" }).waitFor();
    const form = page.getByRole("form", { name: "Upload a dataset" });
    await form.getByLabel("Name").fill("Induction, plate 1");
    await form.getByLabel("Time unit").selectOption("min");
    await form.getByLabel("Amount unit").fill("a.u.");
    await form.getByLabel("Molecules per a.u.").fill("0.5");
    await form.getByLabel(/^File/).setInputFiles({ name: "induction.csv", mimeType: "text/csv", buffer: Buffer.from(SERIES) });
    await page.getByTestId("file-check").filter({ hasText: "Reads as 25 time points of gfp, mcherry." }).waitFor();
    await shot(page, "data-01-upload-form");
    await form.getByRole("button", { name: "Upload dataset" }).click();
    await page.waitForURL(/\/data\/\d+$/);
    datasetUrl = page.url();
    await page.getByRole("heading", { name: "Induction, plate 1" }).waitFor();
    await page.locator("figure svg .mark-line path").first().waitFor();
    const stats = page.getByRole("table", { name: "Measured statistics" });
    expect(await stats.getByRole("row").count()).toBe(3);
    expect(await stats.getByRole("row").nth(1).textContent()).toMatch(/^gfp25/);
    expect(await page.getByRole("link", { name: /Download induction\.csv/ }).getAttribute("href")).toMatch(/\/api\/datasets\/\d+\/file$/);
    await shot(page, "data-02-series");
  });

  it("a file that claims to be CSV but is binary is refused in the browser and by the server", async () => {
    await page.goto(`/labs/${owner.labId}/data`);
    const form = page.getByRole("form", { name: "Upload a dataset" });
    await form.getByLabel("Name").fill("Not a CSV");
    await form.getByLabel("Molecules per a.u.").fill("1");
    await form.getByLabel(/^File/).setInputFiles({ name: "sheet.csv", mimeType: "text/csv", buffer: Buffer.from([0x50, 0x4b, 0x03, 0x04, 0, 0, 1, 2]) });
    await page.getByTestId("file-check").filter({ hasText: "file: is binary, not text (a NUL byte at byte 4)" }).waitFor();
    await form.getByRole("button", { name: "Upload dataset" }).click();
    await form.getByRole("alert").filter({ hasText: "file: is binary, not text (a NUL byte at byte 4); upload a CSV text file" }).waitFor();
    await shot(page, "data-03-binary-refused");
  });

  it("a snapshot shows its histogram and CV/Fano in molecules", async () => {
    await page.goto(`/labs/${owner.labId}/data`);
    const form = page.getByRole("form", { name: "Upload a dataset" });
    await form.getByLabel(/Single-cell snapshot/).check();
    await form.getByLabel("Name").fill("Flow snapshot");
    await form.getByLabel("Molecules per a.u.").fill("0.2");
    await form.getByLabel(/^File/).setInputFiles({ name: "flow.csv", mimeType: "text/csv", buffer: Buffer.from(SNAPSHOT) });
    await page.getByTestId("file-check").filter({ hasText: "Reads as 300 cells, gfp." }).waitFor();
    await form.getByRole("button", { name: "Upload dataset" }).click();
    await page.waitForURL(/\/data\/\d+$/);
    await page.locator("figure svg .mark-rect path").first().waitFor();
    expect(await page.getByRole("table", { name: "Measured statistics" }).getByRole("row").nth(1).textContent()).toMatch(/^gfp300/);
    await shot(page, "data-04-snapshot");
  });

  it("an SBML file imports as a circuit from the Data page", async () => {
    const made = await modeler.client.request("POST", "/api/circuits", { lab_id: modeler.labId, circuit: twoStage });
    const sbml = (await modeler.client.request("GET", `/api/versions/${made.json.version_id}/sbml`)).text;
    await page.goto(`/labs/${owner.labId}/data`);
    const form = page.getByRole("form", { name: "Import a circuit file" });
    await form.getByLabel("Circuit file").setInputFiles({ name: "two-stage.xml", mimeType: "application/xml", buffer: Buffer.from(sbml) });
    await form.getByRole("button", { name: "Import circuit" }).click();
    await form.getByRole("link", { name: "Two-stage reporter" }).waitFor();
    await form.getByLabel("Circuit file").setInputFiles({ name: "broken.xml", mimeType: "application/xml", buffer: Buffer.from("<sbml><model>") });
    await form.getByRole("button", { name: "Import circuit" }).click();
    await form.getByRole("alert").filter({ hasText: /^file: sbml/ }).waitFor();
    await shot(page, "data-05-circuit-import");
  });

  it("a reviewer reads and downloads but gets no upload form and no delete", async () => {
    await switchUser(reviewer);
    await page.goto(`/labs/${owner.labId}/data`);
    await page.getByRole("table", { name: "Datasets" }).waitFor();
    expect(await page.getByRole("form", { name: "Upload a dataset" }).count()).toBe(0);
    expect(await page.getByRole("form", { name: "Import a circuit file" }).count()).toBe(0);
    await page.goto(datasetUrl);
    await page.getByRole("link", { name: /Download induction\.csv/ }).waitFor();
    const download = await page.request.get(await page.getByRole("link", { name: /Download induction\.csv/ }).getAttribute("href") ?? "");
    expect(await download.text()).toBe(SERIES);
    expect(await page.getByRole("button", { name: "Delete dataset" }).count()).toBe(0);
    await shot(page, "data-06-reviewer");
  });

  it("the owner deletes a dataset", async () => {
    await switchUser(owner);
    await page.goto(datasetUrl);
    page.once("dialog", (d) => void d.accept());
    await page.getByRole("button", { name: "Delete dataset" }).click();
    await page.waitForURL(/\/data$/);
    await page.getByRole("table", { name: "Datasets" }).waitFor();
    expect(await page.getByRole("link", { name: "Induction, plate 1" }).count()).toBe(0);
    expect(await page.getByRole("link", { name: "Flow snapshot" }).count()).toBe(1);
  });
});
