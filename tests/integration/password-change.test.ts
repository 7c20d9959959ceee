// POST /api/account/password: the current password is checked like a sign-in (same counters),
// every other session is signed out, this one is renewed, API tokens stay.
import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser, uniqueAddress } from "../support/client";
import { testDb } from "../support/db";
import { testEnv } from "../support/env";

// lib/env.ts default (npm test sets none): 5 wrong passwords per account, then a lock.
const ACCOUNT_MAX = 5;
const NEW_PASSWORD = "a brand new passphrase";

let db: Knex;

beforeAll(() => {
  db = testDb();
});
afterAll(async () => {
  await db.destroy();
});

const change = (c: Client, body: unknown) => c.request("POST", "/api/account/password", body);
const userRow = (id: string) => db("users").where({ id }).first("password_hash", "session_version");

async function pageStatus(c: Client, path: string): Promise<number> {
  const res = await fetch(testEnv().baseUrl + path, { headers: { cookie: c.cookieHeader() }, redirect: "manual" });
  await res.text();
  return res.status;
}

describe("changing the password", () => {
  it("signs out every other session (a copy of this cookie and a second sign-in), keeps this one, and swaps the passwords", async () => {
    const u = await newUser("pw-change");
    const copy = u.client.copy();
    const second = new Client();
    second.address = uniqueAddress();
    expect(await second.signIn(u.email, u.password)).toBe(true);
    const token = await u.client.request("POST", "/api/tokens", { name: "script" });
    expect(token.status).toBe(201);
    const before = await userRow(u.userId);

    const res = await change(u.client, { current_password: u.password, new_password: NEW_PASSWORD });
    expect(res.status, res.text).toBe(200);
    expect(res.json).toEqual({ status: "changed", signed_in: true, other_sessions: "signed out", api_tokens: "unchanged" });
    const after = await userRow(u.userId);
    expect(after.session_version).toBe(before.session_version + 1);
    expect(after.password_hash).not.toBe(before.password_hash);

    // This browser: the renewed cookie works for the API, the session endpoint and pages.
    expect((await u.client.request("GET", "/api/labs")).status).toBe(200);
    expect((await u.client.request("GET", "/api/auth/session")).json.user.id).toBe(u.userId);
    expect(await pageStatus(u.client, `/labs/${u.labId}`)).toBe(200);
    // The old cookie (copied before the change) and the other sign-in: signed out everywhere.
    for (const other of [copy, second]) {
      expect((await other.request("GET", "/api/labs")).status).toBe(401);
      expect((await other.request("GET", "/api/auth/session")).json).toEqual({});
      expect(await pageStatus(other, `/labs/${u.labId}`)).toBe(307);
      expect((await change(other, { current_password: NEW_PASSWORD, new_password: "yet another passphrase" })).status).toBe(401);
    }
    // The API token was not revoked.
    expect((await Client.withToken(token.json.token).request("GET", "/api/labs")).status).toBe(200);

    // The new password signs in, the old one does not.
    const fresh = () => { const c = new Client(); c.address = uniqueAddress(); return c; };
    expect(await fresh().signIn(u.email, u.password)).toBe(false);
    expect(await fresh().signIn(u.email, NEW_PASSWORD)).toBe(true);

    // The owner of the account is told.
    let mails: { subject: string; text_body: string }[] = [];
    for (let i = 0; i < 100 && mails.length === 0; i++) {
      mails = await db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [u.email]).where({ subject: "Your Burstwise password was changed" }).select("subject", "text_body");
      if (!mails.length) await new Promise((r) => setTimeout(r, 100));
    }
    expect(mails).toHaveLength(1);
    expect(mails[0]!.text_body).toContain(`${testEnv().baseUrl}/account`);
  });

  it("a wrong current password is refused naming current_password, counted like a sign-in, and locks the account", async () => {
    const u = await newUser("pw-guess");
    const before = await userRow(u.userId);
    const statuses: number[] = [];
    for (let i = 0; i < ACCOUNT_MAX; i++) {
      const r = await change(u.client, { current_password: `wrong guess ${i}`, new_password: NEW_PASSWORD });
      statuses.push(r.status);
      expect(r.json.error).toBe("current_password: is not your current password");
    }
    expect(statuses).toEqual(Array(ACCOUNT_MAX).fill(403));
    const locked = await change(u.client, { current_password: "one more guess", new_password: NEW_PASSWORD });
    expect(locked.status).toBe(429);
    expect(locked.json.error).toMatch(/^current_password: too many wrong passwords .*; try again in \d+ s$/);
    // The same counter as sign-in: the right password is refused now, by this route and by sign-in.
    expect((await change(u.client, { current_password: u.password, new_password: NEW_PASSWORD })).status).toBe(429);
    const c = new Client();
    c.address = uniqueAddress();
    expect((await c.postSignIn(u.email, u.password)).status).toBe(429);
    expect(await userRow(u.userId)).toEqual(before);
    // Nothing was signed out by the failures.
    expect((await u.client.request("GET", "/api/labs")).status).toBe(200);

    // Once the lock is over the right password works.
    await db("auth_limits").where({ kind: "signin_account", key: u.email }).update({ locked_until: db.raw("now() - interval '1 second'") });
    expect((await change(u.client, { current_password: u.password, new_password: NEW_PASSWORD })).status).toBe(200);
  });

  it("bad input is a 4xx naming the field and changes nothing", async () => {
    const u = await newUser("pw-bad");
    const before = await userRow(u.userId);
    const cases: [unknown, number, RegExp][] = [
      [{ current_password: u.password, new_password: "short" }, 422, /^new_password: at least 10 characters$/],
      [{ current_password: u.password, new_password: "x".repeat(201) }, 422, /^new_password: at most 200 characters$/],
      [{ current_password: u.password }, 422, /^new_password: /],
      [{ new_password: NEW_PASSWORD }, 422, /^current_password: /],
      [{ current_password: u.password, new_password: NEW_PASSWORD, email: "x@y.z" }, 422, /^body: .*email/],
      [{ current_password: u.password, new_password: u.password }, 422, /^new_password: is the same as the current password$/],
      [{ current_password: "wrong one here", new_password: "short" }, 422, /^new_password: /],
    ];
    for (const [body, status, error] of cases) {
      const r = await change(u.client, body);
      expect(r.status, JSON.stringify(body)).toBe(status);
      expect(r.json.error, JSON.stringify(body)).toMatch(error);
    }
    expect((await u.client.request("POST", "/api/account/password", undefined, "not json")).status).toBe(400);
    // Not JSON typed (what a form on another site can send): 415.
    const form = await fetch(`${testEnv().baseUrl}/api/account/password`, {
      method: "POST", headers: { cookie: u.client.cookieHeader(), "content-type": "text/plain" },
      body: JSON.stringify({ current_password: u.password, new_password: NEW_PASSWORD }),
    });
    expect(form.status).toBe(415);
    expect(await userRow(u.userId)).toEqual(before);
    expect((await u.client.request("GET", "/api/labs")).status).toBe(200);
  });

  it("refuses anonymous callers, API tokens and other sites", async () => {
    const u = await newUser("pw-who");
    const before = await userRow(u.userId);
    const body = { current_password: u.password, new_password: NEW_PASSWORD };
    expect((await change(new Client(), body)).status).toBe(401);
    const token = (await u.client.request("POST", "/api/tokens", { name: "t" })).json.token;
    const byToken = await change(Client.withToken(token), body);
    expect(byToken.status).toBe(403);
    expect(byToken.json.error).toMatch(/^session: /);
    const evil = await fetch(`${testEnv().baseUrl}/api/account/password`, {
      method: "POST", headers: { cookie: u.client.cookieHeader(), "content-type": "application/json", origin: "http://evil.example" }, body: JSON.stringify(body),
    });
    expect(evil.status).toBe(403);
    expect(((await evil.json()) as { error: string }).error).toMatch(/^origin: /);
    expect(await userRow(u.userId)).toEqual(before);
  });
});
