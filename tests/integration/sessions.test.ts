import { randomUUID } from "node:crypto";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser, uniqueAddress } from "../support/client";
import { testDb } from "../support/db";
import { testEnv } from "../support/env";

let db: Knex;

beforeAll(() => {
  db = testDb();
});
afterAll(async () => {
  await db.destroy();
});


async function signOut(c: Client): Promise<number> {
  const csrf = await c.request("GET", "/api/auth/csrf");
  const res = await fetch(`${testEnv().baseUrl}/api/auth/signout`, {
    method: "POST", redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: c.cookieHeader() },
    body: new URLSearchParams({ csrfToken: csrf.json.csrfToken, callbackUrl: "/signin", json: "true" }),
  });
  return res.status;
}

describe("signing out ends the session token everywhere", () => {
  it("a copy of the token taken before sign-out is signed out for the API, the session endpoint and pages", async () => {
    const u = await newUser("leaver");
    const copy = u.client.copy();
    expect((await copy.request("GET", "/api/labs")).status).toBe(200);
    expect((await copy.request("GET", `/labs/${u.labId}`)).status).toBe(200);
    const before = (await db("users").where({ id: u.userId }).first("session_version")).session_version;

    expect(await signOut(u.client)).toBe(200);
    expect((await db("users").where({ id: u.userId }).first("session_version")).session_version).toBe(before + 1);

    expect((await copy.request("GET", "/api/labs")).status).toBe(401);
    // A page: the proxy sends the stale token to sign-in.
    const page = await fetch(`${testEnv().baseUrl}/labs/${u.labId}`, { headers: { cookie: copy.cookieHeader() }, redirect: "manual" });
    expect(page.status).toBe(307);
    expect(page.headers.get("location")).toMatch(/\/signin\?callbackUrl=/);
    expect((await copy.request("GET", "/api/auth/session")).json).toEqual({});

    // Signing in again gives a new token that works.
    expect(await u.client.signIn(u.email, u.password)).toBe(true);
    expect((await u.client.request("GET", "/api/labs")).status).toBe(200);
  });
});

describe("sign-up does not tell whether an e-mail has an account", () => {
  it("a taken address gets the same status and body as a new one, nothing is written, and its owner is e-mailed", async () => {
    const existing = await newUser("taken");
    const fresh = `fresh-${randomUUID().slice(0, 8)}@test.example`;
    const c = new Client();
    c.address = uniqueAddress();
    const forNew = await c.request("POST", "/api/signup", { email: fresh, name: "Fresh", password: "another long password" });
    const before = await db("users").count("* as n").first();
    const forTaken = await c.request("POST", "/api/signup", { email: existing.email.toUpperCase(), name: "Intruder", password: "another long password" });
    expect(forTaken.status).toBe(forNew.status);
    expect(forTaken.text).toBe(forNew.text);
    expect(forNew.status).toBe(202);
    expect(await db("users").count("* as n").first()).toEqual(before);
    const row = await db("users").where({ email: existing.email }).first("name");
    expect(row.name).toBe("taken");
    // The existing account still signs in with its own password only.
    expect(await new Client().signIn(existing.email, "another long password")).toBe(false);
    expect(await new Client().signIn(existing.email, existing.password)).toBe(true);

    let mails: { subject: string; text_body: string }[] = [];
    for (let i = 0; i < 100 && mails.length === 0; i++) {
      mails = await db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [existing.email]).select("subject", "text_body");
      if (!mails.length) await new Promise((r) => setTimeout(r, 100));
    }
    expect(mails).toHaveLength(1);
    expect(mails[0]!.subject).toBe("Someone tried to create a Burstwise account with your address");
    expect(mails[0]!.text_body).toContain(`${testEnv().baseUrl}/signin`);
    // The new address got no such message.
    expect(await db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [fresh]).count("* as n").first()).toEqual({ n: "0" });
  });
});

describe("redirect targets stay on the site", () => {
  const hostile = ["/\\evil.example", "/\\t/evil.example", "/\t/evil.example", "//evil.example", "https://evil.example", "/.//evil.example"];
  it.each(hostile)("next-auth's sign-in answer for callbackUrl %j points at this origin", async (target) => {
    const u = await newUser("redirect");
    const res = await u.client.postSignIn(u.email, u.password, { callbackUrl: target });
    expect(res.status).toBe(200);
    const { url } = (await res.json()) as { url: string };
    const parsed = new URL(url);
    expect(parsed.origin).toBe(testEnv().baseUrl);
    expect(parsed.pathname.startsWith("//")).toBe(false);
    expect(`${parsed.pathname}`).not.toMatch(/evil/);
  });

  it("a same-origin path is kept", async () => {
    const u = await newUser("redirect-ok");
    const res = await u.client.postSignIn(u.email, u.password, { callbackUrl: `/labs/${u.labId}/runs?x=1` });
    expect((await res.json()).url).toBe(`${testEnv().baseUrl}/labs/${u.labId}/runs?x=1`);
  });
});
