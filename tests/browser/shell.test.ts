import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";

let ctx: BrowserContext;
let page: Page;

beforeAll(async () => {
  ctx = await openBrowser();
  page = await ctx.newPage();
});
afterAll(async () => {
  await ctx?.close();
});

describe("the signed-in shell in Chromium", () => {
  it("sends an anonymous visitor of a lab page to sign-in", async () => {
    await page.goto("/labs");
    await page.waitForURL(/\/signin/);
    expect(new URL(page.url()).searchParams.get("callbackUrl")).toContain("/labs");
    await shot(page, "01-signin-redirect");
  });

  it("the home page states the job and the caution", async () => {
    await page.goto("/");
    await expect.poll(() => page.getByRole("heading", { level: 1 }).textContent()).toMatch(/noisy a gene circuit/);
    expect(await page.getByRole("note").textContent()).toMatch(/Simulated noise is what a model predicts/);
    await shot(page, "02-home");
  });

  it("a wrong password shows an error and stays on sign-in", async () => {
    await signInAs(page, "modeler@sentinel.example", "wrong-password");
    // Next adds a route announcer with role alert, so look for the form's own alert by text.
    await page.getByRole("alert").filter({ hasText: "E-mail or password is wrong." }).waitFor();
    expect(page.url()).toContain("/signin");
  });

  it("the demo modeler signs in and lands on the Soil Sentinel shell", async () => {
    await signInAs(page, "modeler@sentinel.example", "sentinel-demo");
    await page.waitForURL(/\/labs\/\d+$/);
    await page.getByRole("heading", { name: "Soil Sentinel" }).waitFor();
    expect(await page.getByTestId("role-badge").textContent()).toBe("modeler");
    const sections = await page.getByRole("navigation", { name: "Sections" }).getByRole("link").allTextContents();
    expect(sections).toEqual(["Overview", "Circuits", "Runs", "Comparisons", "Data", "Lab"]);
    expect(await page.getByLabel("Lab").inputValue()).toMatch(/^\d+$/);
    await shot(page, "03-shell-modeler");
  });

  it("a section says what belongs there (Comparisons: the demo lab's seeded comparison)", async () => {
    await page.getByRole("navigation", { name: "Sections" }).getByRole("link", { name: "Comparisons" }).click();
    await page.getByRole("heading", { name: "Comparisons", level: 1 }).waitFor();
    await page.getByText(/CV, Fano factor and period precision side by side/).waitFor();
    expect(await page.getByRole("navigation", { name: "Sections" }).getByRole("link", { name: "Comparisons" }).getAttribute("aria-current")).toBe("page");
    await shot(page, "04-comparisons");
  });

  it("the Lab section lists the members; a modeler gets no role controls", async () => {
    await page.getByRole("link", { name: "Lab", exact: true }).click();
    await page.getByRole("table", { name: "Lab members" }).waitFor();
    const emails = await page.getByRole("row").allTextContents();
    expect(emails.join(" ")).toContain("reviewer@sentinel.example");
    expect(await page.getByRole("combobox", { name: /Role of/ }).count()).toBe(0);
    await shot(page, "05-lab-members");
  });

  it("signs out back to the sign-in page, and lab pages then need sign-in again", async () => {
    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/signin/);
    await page.goto("/labs");
    await page.waitForURL(/\/signin/);
    await shot(page, "06-signed-out");
  });

  it("fits a tablet width without horizontal scrolling of the page", async () => {
    await page.setViewportSize({ width: 768, height: 1024 });
    await signInAs(page, "owner@sentinel.example", "sentinel-demo");
    await page.waitForURL(/\/labs\/\d+$/);
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await shot(page, "07-owner-tablet");
  });
});
