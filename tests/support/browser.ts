import { mkdirSync, mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { chromium, type BrowserContext, type Page } from "playwright-core";

import { testEnv } from "./env";

export const SCREENSHOTS = join(process.cwd(), "test-results", "screenshots");

// Debian's Chromium, headless, with every background connection off (the machine has no internet).
const ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
  "--disable-background-networking", "--disable-component-update", "--disable-sync", "--disable-dev-shm-usage"];

/** A fresh browser profile on Debian's Chromium (never a downloaded browser). */
export async function openBrowser(viewport = { width: 1280, height: 800 }): Promise<BrowserContext> {
  mkdirSync(SCREENSHOTS, { recursive: true });
  const profile = mkdtempSync(join(tmpdir(), "burstwise-profile-"));
  return chromium.launchPersistentContext(profile, { executablePath: testEnv().chromiumPath, headless: true, args: ARGS, viewport, baseURL: testEnv().baseUrl });
}

export async function shot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: join(SCREENSHOTS, `${name}.png`), fullPage: true });
}

/** Signs in through the real sign-in form. */
export async function signInAs(page: Page, email: string, password: string): Promise<void> {
  await page.goto("/signin");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
}
