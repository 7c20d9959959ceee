import type { BrowserContext } from "playwright-core";
import { afterAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser, uniqueAddress } from "../support/client";
import { testEnv } from "../support/env";

const contexts: BrowserContext[] = [];
afterAll(async () => {
  await Promise.all(contexts.map((c) => c.close()));
});

/** A fresh browser that names an address of its own (npm test plays the trusted proxy). */
async function freshPage() {
  const ctx = await openBrowser();
  contexts.push(ctx);
  await ctx.setExtraHTTPHeaders({ "x-forwarded-for": uniqueAddress() });
  return ctx.newPage();
}

describe("after sign-in the browser stays on the site", () => {
  // Raw targets as an attacker would put them in a link; each resolves off site in a browser.
  it.each(["/\\evil.example", "/\t/evil.example", "/\\t/evil.example", "//evil.example", "https://evil.example/labs"])("callbackUrl %j lands on /labs here", async (target) => {
    const { email, password } = await newUser("bounce");
    const page = await freshPage();
    await page.goto(`/signin?callbackUrl=${encodeURIComponent(target)}`);
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel("Password").fill(password);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL((u) => u.origin === testEnv().baseUrl && /^\/labs(\/\d+)?$/.test(u.pathname), { timeout: 15_000 });
    expect(new URL(page.url()).origin).toBe(testEnv().baseUrl);
  });

  it("a same-site callbackUrl is still followed", async () => {
    const { email, password, labId } = await newUser("follow");
    const page = await freshPage();
    await page.goto(`/signin?callbackUrl=${encodeURIComponent(`/labs/${labId}/runs`)}`);
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel("Password").fill(password);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL(`${testEnv().baseUrl}/labs/${labId}/runs`);
  });
});

describe("the sign-in form says when attempts are locked", () => {
  it("after 5 wrong passwords the form says to wait, and the right one is refused until then", async () => {
    const { email, password } = await newUser("lockout");
    const page = await freshPage();
    for (let i = 0; i < 5; i++) {
      await signInAs(page, email, `wrong password ${i}`);
      await page.getByRole("alert").filter({ hasText: "E-mail or password is wrong." }).waitFor();
    }
    await signInAs(page, email, "wrong password 6");
    await page.getByRole("alert").filter({ hasText: /^Too many attempts, try again in \d+ s\.$/ }).waitFor();
    await signInAs(page, email, password);
    await page.getByRole("alert").filter({ hasText: /^Too many attempts, try again in \d+ s\.$/ }).waitFor();
    expect(new URL(page.url()).pathname).toBe("/signin");
    await shot(page, "auth-01-locked");
  });
});
