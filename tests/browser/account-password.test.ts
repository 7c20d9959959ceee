import type { BrowserContext } from "playwright-core";
import { afterAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { Client, newUser, uniqueAddress } from "../support/client";
import { testEnv } from "../support/env";

const contexts: BrowserContext[] = [];
afterAll(async () => {
  await Promise.all(contexts.map((c) => c.close()));
});

async function freshPage() {
  const ctx = await openBrowser();
  contexts.push(ctx);
  await ctx.setExtraHTTPHeaders({ "x-forwarded-for": uniqueAddress() });
  return ctx.newPage();
}

describe("the account page changes the password", () => {
  it("a wrong current password is shown by its field; the right one changes it, this browser stays signed in, others are signed out", async () => {
    const u = await newUser("pw-page");
    const page = await freshPage();
    await signInAs(page, u.email, u.password);
    await page.waitForURL(/\/labs/);
    await page.goto(`/labs/${u.labId}`);
    await page.getByRole("link", { name: u.email }).click();
    await page.waitForURL(`${testEnv().baseUrl}/account`);
    await page.getByText("Your personal API tokens keep working").waitFor();

    await page.getByLabel("Current password").fill("not my password");
    await page.getByLabel("New password (10 characters or more)").fill("the new passphrase");
    await page.getByLabel("New password again").fill("the new passphrase");
    await page.getByRole("button", { name: "Change password" }).click();
    await page.getByText("current_password: is not your current password").waitFor();

    await page.getByLabel("Current password").fill(u.password);
    await page.getByLabel("New password (10 characters or more)").fill("short");
    await page.getByLabel("New password again").fill("short");
    await page.getByRole("button", { name: "Change password" }).click();
    await page.getByText("new_password: at least 10 characters").waitFor();

    await page.getByLabel("New password (10 characters or more)").fill("the new passphrase");
    await page.getByLabel("New password again").fill("the new passphrase");
    await page.getByRole("button", { name: "Change password" }).click();
    await page.getByRole("status").filter({ hasText: "Password changed. Every other browser signed in to your account was signed out; this one stays signed in." }).waitFor();
    await shot(page, "account-01-password-changed");

    // This browser is still signed in (a page behind the proxy and the API from the page).
    await page.goto(`/labs/${u.labId}`);
    expect(new URL(page.url()).pathname).toBe(`/labs/${u.labId}`);
    expect(await page.evaluate(async () => (await fetch("/api/labs")).status)).toBe(200);
    // The sign-in from before (the API client's session) is not.
    expect((await u.client.request("GET", "/api/labs")).status).toBe(401);
    // The new password signs in, the old one does not.
    const c = new Client();
    c.address = uniqueAddress();
    expect(await c.signIn(u.email, u.password)).toBe(false);
    expect(await c.signIn(u.email, "the new passphrase")).toBe(true);
  });
});
