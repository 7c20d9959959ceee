import { randomUUID } from "node:crypto";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;

beforeAll(async () => {
  db = testDb();
  owner = await newUser("inviter");
});
afterAll(async () => {
  await db.destroy();
});

const fresh = (p = "invitee") => `${p}-${randomUUID().slice(0, 8)}@test.example`;

/** The messages the mail fake received for `to`, waiting up to `timeoutMs` for `count` of them. */
async function inbox(to: string, count = 1, timeoutMs = 10_000): Promise<{ subject: string; text_body: string }[]> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const rows = await db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [to]).orderBy("id").select("subject", "text_body");
    if (rows.length >= count || Date.now() > until) return rows;
    await new Promise((r) => setTimeout(r, 100));
  }
}
const linkIn = (text: string) => /https?:\/\/\S+\/invite\/([A-Za-z0-9_-]{43})/.exec(text);

async function invite(email: string, role = "reviewer", client = owner.client, labId = owner.labId) {
  const r = await client.request("POST", `/api/labs/${labId}/invitations`, { email, role });
  expect(r.status, r.text).toBe(201);
  return r.json as { id: string; email: string; role: string; mail: string; accept_url: string; expires_at: string };
}
const tokenOf = (url: string) => url.split("/invite/")[1]!;

describe("invitations by e-mail", () => {
  it("an owner invites; the e-mail arrives at the mail fake with a one-time link; only the token's hash is stored", async () => {
    const email = fresh();
    const t0 = Date.now();
    const inv = await invite(email);
    expect(inv.mail).toBe("sent");
    const expiresInH = (Date.parse(inv.expires_at) - t0) / 3600_000;
    expect(expiresInH).toBeGreaterThan(167.9); // INVITATION_TTL_H default: 7 days
    expect(expiresInH).toBeLessThan(168.1);
    const [mail] = await inbox(email);
    expect(mail!.subject).toBe("You are invited to inviter's lab on Burstwise");
    const link = linkIn(mail!.text_body);
    expect(link![0]).toBe(inv.accept_url);
    const row = await db("invitations").where({ id: inv.id }).first();
    expect(row.token_hash).toMatch(/^[0-9a-f]{64}$/);
    expect(JSON.stringify(row)).not.toContain(link![1]);
  });

  it("the invitee creates an account through the link, joins with the role, and the link then refuses a second use", async () => {
    const email = fresh("newcomer");
    const inv = await invite(email, "reviewer");
    const token = tokenOf(inv.accept_url);
    const anon = new Client();
    const view = await anon.request("GET", `/api/invitations/${token}`);
    expect(view.json).toMatchObject({ state: "open", email, role: "reviewer", lab_name: "inviter's lab", invited_by: owner.email, has_account: false });
    const missing = await anon.request("POST", `/api/invitations/${token}/accept`, { name: "Nia" });
    expect(missing.status).toBe(422);
    expect(missing.json.error).toBe("password: is required to create your account");

    const accepted = await anon.request("POST", `/api/invitations/${token}/accept`, { name: "Nia Newcomer", password: "a long enough password" });
    expect(accepted.status, accepted.text).toBe(201);
    expect(accepted.json).toMatchObject({ lab_id: owner.labId, role: "reviewer", account_created: true });
    const member = new Client();
    expect(await member.signIn(email, "a long enough password")).toBe(true);
    expect((await member.request("GET", "/api/labs")).json.labs).toEqual([{ id: owner.labId, name: "inviter's lab", role: "reviewer" }]);
    const write = await member.request("POST", "/api/circuits", { lab_id: owner.labId, circuit: {} });
    expect(write.status).toBe(403);

    const usersBefore = await db("users").count("* as n").first();
    const again = await new Client().request("POST", `/api/invitations/${token}/accept`, { name: "Eve", password: "another long password" });
    expect(again.status).toBe(410);
    expect(again.json.error).toBe("token: this invitation has already been used; ask the lab's owner for a new one");
    const asMember = await member.request("POST", `/api/invitations/${token}/accept`, {});
    expect(asMember.status).toBe(410);
    expect(await db("users").count("* as n").first()).toEqual(usersBefore);
    expect((await anon.request("GET", `/api/invitations/${token}`)).json.state).toBe("accepted");
  });

  it("an expired link is refused with the date, and nothing is written", async () => {
    const email = fresh("late");
    const inv = await invite(email);
    await db("invitations").where({ id: inv.id }).update({ expires_at: db.raw("now() - interval '1 minute'") });
    const token = tokenOf(inv.accept_url);
    const members = await db("memberships").where({ lab_id: owner.labId }).count("* as n").first();
    const r = await new Client().request("POST", `/api/invitations/${token}/accept`, { name: "Late", password: "a long enough password" });
    expect(r.status).toBe(410);
    expect(r.json.error).toMatch(/^token: this invitation expired on \d{4}-\d\d-\d\d \d\d:\d\d UTC; ask the lab's owner for a new one$/);
    expect(await db("users").where({ email }).first()).toBeUndefined();
    expect(await db("memberships").where({ lab_id: owner.labId }).count("* as n").first()).toEqual(members);
    expect((await new Client().request("GET", `/api/invitations/${token}`)).json.state).toBe("expired");
  });

  it("a withdrawn link is refused; withdrawing twice is a 404; inviting again replaces the open invitation", async () => {
    const email = fresh("maybe");
    const first = await invite(email);
    expect((await owner.client.request("DELETE", `/api/labs/${owner.labId}/invitations/${first.id}`)).status).toBe(204);
    expect((await owner.client.request("DELETE", `/api/labs/${owner.labId}/invitations/${first.id}`)).status).toBe(404);
    const r = await new Client().request("POST", `/api/invitations/${tokenOf(first.accept_url)}/accept`, { name: "M", password: "a long enough password" });
    expect(r.status).toBe(410);
    expect(r.json.error).toBe("token: this invitation was withdrawn by the lab's owner");

    const second = await invite(email, "modeler");
    const third = await invite(email, "reviewer");
    const open = (await owner.client.request("GET", `/api/labs/${owner.labId}/invitations`)).json.invitations.filter((i: { email: string }) => i.email === email);
    expect(open).toEqual([expect.objectContaining({ id: third.id, role: "reviewer", state: "open" })]);
    expect((await new Client().request("GET", `/api/invitations/${tokenOf(second.accept_url)}`)).json.state).toBe("revoked");
  });

  it("an existing account must sign in with the invited address; another account is refused", async () => {
    const existing = await newUser("existing");
    const inv = await invite(existing.email, "modeler");
    const token = tokenOf(inv.accept_url);
    const anon = await new Client().request("POST", `/api/invitations/${token}/accept`, { name: "X", password: "a long enough password" });
    expect(anon.status).toBe(409);
    expect(anon.json.error).toMatch(/^email: an account with .* already exists; sign in with it/);
    const someoneElse = await newUser("someone");
    const wrong = await someoneElse.client.request("POST", `/api/invitations/${token}/accept`, {});
    expect(wrong.status).toBe(403);
    expect(wrong.json.error).toMatch(/^email: this invitation is for /);
    const ok = await existing.client.request("POST", `/api/invitations/${token}/accept`);
    expect(ok.status, ok.text).toBe(200);
    expect((await existing.client.request("GET", "/api/labs")).json.labs).toContainEqual({ id: owner.labId, name: "inviter's lab", role: "modeler" });
  });

  it("inviting a member is a 409; bad e-mails and roles are 422 naming the field; unknown links are 404", async () => {
    const r = await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: owner.email, role: "reviewer" });
    expect(r.status).toBe(409);
    expect(r.json.error).toMatch(/^email: .* is already a member of this lab/);
    expect((await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: "nope", role: "reviewer" })).json.error).toMatch(/^email: /);
    expect((await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email: fresh(), role: "admin" })).json.error).toMatch(/^role: /);
    expect((await new Client().request("GET", "/api/invitations/short")).status).toBe(404);
    expect((await new Client().request("GET", `/api/invitations/${"x".repeat(43)}`)).status).toBe(404);
    expect((await new Client().request("POST", `/api/invitations/${"x".repeat(43)}/accept`, {})).status).toBe(404);
  });

  it("the last owner still cannot be demoted or removed", async () => {
    const demote = await owner.client.request("PATCH", `/api/labs/${owner.labId}/members/${owner.userId}`, { role: "reviewer" });
    expect(demote.status).toBe(409);
    const remove = await owner.client.request("DELETE", `/api/labs/${owner.labId}/members/${owner.userId}`);
    expect(remove.status).toBe(409);
    expect(remove.json.error).toMatch(/^role: the lab's last owner/);
  });
});
