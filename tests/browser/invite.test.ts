import { randomUUID } from "node:crypto";

import type { Knex } from "knex";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { openBrowser, shot, signInAs } from "../support/browser";
import { newUser } from "../support/client";
import { testDb } from "../support/db";

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;
let ownerCtx: BrowserContext;
let page: Page;
const contexts: BrowserContext[] = [];
const inviteeEmail = `rhea-${randomUUID().slice(0, 8)}@test.example`;
let link = "";

beforeAll(async () => {
  db = testDb();
  owner = await newUser("Olive");
  ownerCtx = await openBrowser();
  page = await ownerCtx.newPage();
});
afterAll(async () => {
  await Promise.all([ownerCtx?.close(), ...contexts.map((c) => c.close())]);
  await db.destroy();
});

async function freshContext() {
  const c = await openBrowser();
  contexts.push(c);
  return c.newPage();
}

describe("a full invitation in Chromium", () => {
  it("the owner invites a reviewer from the Lab page and sees the invitation waiting", async () => {
    await signInAs(page, owner.email, owner.password);
    await page.waitForURL(/\/labs\/\d+$/);
    await page.goto(`/labs/${owner.labId}/members`);
    const form = page.getByRole("form", { name: "Invite by e-mail" });
    await form.getByLabel("E-mail").fill(inviteeEmail);
    await form.getByLabel("Role").selectOption("reviewer");
    await form.getByRole("button", { name: "Send invitation" }).click();
    await page.getByRole("status").filter({ hasText: `Invitation e-mailed to ${inviteeEmail}.` }).waitFor();
    const pending = page.getByRole("table", { name: "Pending invitations" });
    await pending.getByRole("cell", { name: inviteeEmail, exact: true }).waitFor();
    expect(await pending.getByRole("row").filter({ hasText: inviteeEmail }).textContent()).toContain("reviewer");
    await shot(page, "invite-01-owner-invited");
  });

  it("the message arrives at the mail fake; the owner's inbox page does not show it (it is the invitee's mail)", async () => {
    let stored: { text_body: string }[] = [];
    for (let i = 0; i < 100 && stored.length === 0; i++) {
      stored = await db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [inviteeEmail]).select("text_body");
      if (!stored.length) await page.waitForTimeout(100);
    }
    expect(stored).toHaveLength(1);
    link = /https?:\/\/\S+\/invite\/[A-Za-z0-9_-]{43}/.exec(stored[0]!.text_body)![0];
    expect(link).toMatch(new RegExp(`^${process.env.BURSTWISE_TEST_URL}/invite/[A-Za-z0-9_-]{43}$`));
    await page.goto("/dev/mail");
    await page.getByRole("heading", { name: "Mail fake inbox" }).waitFor();
    expect(await page.getByRole("article", { name: "You are invited to Olive's lab on Burstwise" }).count()).toBe(0);
    expect(await page.getByText(inviteeEmail).count()).toBe(0);
    expect(await page.locator(`a[href="${link}"]`).count()).toBe(0);
    await shot(page, "invite-02-mail-fake");
  });

  it("in a fresh browser the invitee follows the link, signs up there, and sees the lab read-only", async () => {
    const p = await freshContext();
    await p.goto(link);
    await p.getByRole("heading", { name: "Join Olive's lab" }).waitFor();
    expect(await p.getByText(/invites .* as reviewer/).textContent()).toContain(inviteeEmail);
    await shot(p, "invite-03-invite-page");
    await p.getByLabel("Name").fill("Rhea Reviewer");
    await p.getByLabel("Password (10 characters or more)").fill("reviewer password 1");
    await p.getByRole("button", { name: "Create account and join" }).click();
    await p.waitForURL(new RegExp(`/labs/${owner.labId}$`));
    expect(await p.getByTestId("role-badge").textContent()).toBe("reviewer");
    expect(await p.getByText(/you can read everything and download data; you change nothing/).count()).toBe(1);
    await shot(p, "invite-04-invitee-overview");

    await p.goto(`/labs/${owner.labId}/data`);
    await p.getByRole("heading", { name: "Data", exact: true }).waitFor();
    expect(await p.getByRole("form", { name: "Upload a dataset" }).count()).toBe(0);
    await p.goto(`/labs/${owner.labId}/members`);
    await p.getByRole("table", { name: "Lab members" }).waitFor();
    expect(await p.getByRole("combobox", { name: /Role of/ }).count()).toBe(0);
    expect(await p.getByRole("heading", { name: "Invitations" }).count()).toBe(0);
    expect(await p.getByRole("heading", { name: "Audit trail" }).count()).toBe(0);
    await shot(p, "invite-05-invitee-lab-page");

    // Signed in as the invitee, the inbox page shows the invitation: their own mail.
    await p.goto("/dev/mail");
    const message = p.getByRole("article", { name: "You are invited to Olive's lab on Burstwise" }).filter({ hasText: inviteeEmail });
    await message.waitFor();
    expect(await message.getByRole("link").first().getAttribute("href")).toBe(link);

    // The same link again, now signed in: it has been used.
    await p.goto(link);
    await p.getByRole("heading", { name: "This invitation has already been used" }).waitFor();
  });

  it("a reused link in yet another browser is refused with a clear message", async () => {
    const p = await freshContext();
    await p.goto(link);
    await p.getByRole("heading", { name: "This invitation has already been used" }).waitFor();
    expect(await p.getByRole("alert").filter({ hasText: "Each invitation link works once" }).count()).toBe(1);
    expect(await p.getByRole("button", { name: "Create account and join" }).count()).toBe(0);
    await shot(p, "invite-06-reused");
  });

  it("an expired link is refused with the date", async () => {
    const r = await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: `late-${randomUUID().slice(0, 8)}@test.example`, role: "modeler" });
    await db("invitations").where({ id: r.json.id }).update({ expires_at: db.raw("now() - interval '1 hour'") });
    const p = await freshContext();
    await p.goto(r.json.accept_url);
    await p.getByRole("heading", { name: "This invitation has expired" }).waitFor();
    expect(await p.getByRole("alert").filter({ hasText: /It expired on \d{4}-\d\d-\d\d \d\d:\d\d UTC/ }).count()).toBe(1);
    await shot(p, "invite-07-expired");
  });

  it("the owner sees the new member, the invitation gone from the waiting list, and the trail", async () => {
    await page.goto(`/labs/${owner.labId}/members`);
    await page.getByRole("table", { name: "Lab members" }).getByRole("cell", { name: inviteeEmail, exact: true }).waitFor();
    expect(await page.getByRole("combobox", { name: `Role of ${inviteeEmail}` }).inputValue()).toBe("reviewer");
    expect(await page.getByRole("table", { name: "Pending invitations" }).getByRole("cell", { name: inviteeEmail, exact: true }).count()).toBe(0);
    const trail = page.getByRole("table", { name: "Audit trail" });
    await trail.getByRole("row").filter({ hasText: "invitation.accepted" }).waitFor();
    expect(await trail.getByRole("row").filter({ hasText: "invitation.accepted" }).textContent()).toContain(`${inviteeEmail} accepted the invitation and joined as reviewer (new account)`);
    await shot(page, "invite-08-owner-after");
  });
});
