import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";

let owner: Awaited<ReturnType<typeof newUser>>;
let modeler: Awaited<ReturnType<typeof newUser>>;
let ctx: BrowserContext;
let page: Page;

beforeAll(async () => {
  [owner, modeler] = await Promise.all([newUser("LabOwner"), newUser("LabModeler")]);
  await owner.client.request("POST", `/api/labs/${owner.labId}/members`, { email: modeler.email, role: "reviewer" });
  const f = new FormData();
  for (const [k, v] of Object.entries({ lab_id: owner.labId, kind: "snapshot", name: "Trail plate", amount_unit: "molecules" })) f.set(k, v);
  f.set("file", new Blob(["P\n1\n2\n"], { type: "text/csv" }), "p.csv");
  await owner.client.request("POST", "/api/datasets", f);
  ctx = await openBrowser();
  page = await ctx.newPage();
});
afterAll(async () => {
  await ctx?.close();
});

describe("the Lab page in Chromium", () => {
  it("an owner changes a role; the audit trail shows it and filters by action and by person", async () => {
    await signInAs(page, owner.email, owner.password);
    await page.waitForURL(/\/labs\/\d+$/);
    await page.goto(`/labs/${owner.labId}/members`);
    await page.getByRole("combobox", { name: `Role of ${modeler.email}` }).selectOption("modeler");
    const trail = page.getByRole("table", { name: "Audit trail" });
    await trail.getByRole("row").filter({ hasText: `changed the role of ${modeler.email} (reviewer → modeler)` }).waitFor();
    expect(await trail.getByRole("row").filter({ hasText: "dataset.uploaded" }).count()).toBe(1);
    await shot(page, "lab-01-owner");

    const filters = page.getByRole("form", { name: "Filter the audit trail" });
    await filters.getByLabel("Action").selectOption("dataset");
    await expect.poll(() => trail.locator("tbody tr").count()).toBe(1);
    expect(await trail.locator("tbody tr").first().getAttribute("data-action")).toBe("dataset.uploaded");
    await filters.getByLabel("Action").selectOption("");
    await filters.getByLabel("Who").selectOption(owner.email.toLowerCase()); // e-mails are stored lower-case
    await expect.poll(async () => new Set(await trail.locator("tbody tr").evaluateAll((rows) => rows.map((r) => r.getAttribute("data-action")))).has("member.role_changed")).toBe(true);
    await filters.getByLabel("From").fill(new Date(Date.now() + 2 * 86_400_000).toISOString().slice(0, 10));
    await trail.getByText("Nothing recorded that matches these filters.").waitFor();
    await shot(page, "lab-02-audit-filtered");
  });

  it("each member sets run e-mails for themselves, and the choice stays", async () => {
    await page.getByLabel("When a run I launched finishes or fails").check();
    await page.getByRole("status").filter({ hasText: "Saved." }).waitFor();
    await page.reload();
    expect(await page.getByLabel("When a run I launched finishes or fails").isChecked()).toBe(true);
    const me = await owner.client.request("GET", "/api/me/notifications");
    expect(me.json.settings).toContainEqual(expect.objectContaining({ lab_id: owner.labId, runs: "mine" }));
  });

  it("a modeler sees members and their own e-mail choice, but no invitations, role controls or audit trail", async () => {
    await ctx.clearCookies();
    await signInAs(page, modeler.email, modeler.password);
    await page.waitForURL(/\/labs\/\d+$/);
    await page.goto(`/labs/${owner.labId}/members`);
    await page.getByRole("table", { name: "Lab members" }).waitFor();
    expect(await page.getByRole("heading", { name: "Run e-mails" }).count()).toBe(1);
    expect(await page.getByRole("heading", { name: "Invitations" }).count()).toBe(0);
    expect(await page.getByRole("heading", { name: "Audit trail" }).count()).toBe(0);
    expect(await page.getByRole("combobox", { name: /Role of/ }).count()).toBe(0);
    expect(await page.getByLabel("No e-mail").isChecked()).toBe(true);
    await page.getByLabel("When any run in this lab finishes or fails").check();
    await page.getByRole("status").filter({ hasText: "Saved." }).waitFor();
    await shot(page, "lab-03-modeler");
  });
});
