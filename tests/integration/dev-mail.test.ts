import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import { createServer } from "node:net";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { testEnv } from "../support/env";

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;

beforeAll(async () => {
  db = testDb();
  owner = await newUser("mailowner");
});
afterAll(async () => {
  await db.destroy();
});

async function invite(email: string): Promise<string> {
  const r = await owner.client.request("POST", `/api/labs/${owner.labId}/invitations`, { email, role: "owner" });
  expect(r.status, r.text).toBe(201);
  expect(r.json.mail).toBe("sent");
  return r.json.accept_url.split("/invite/")[1];
}

async function waitForMail(to: string): Promise<void> {
  for (let i = 0; i < 100; i++) {
    if (await db("mail_fake_messages").whereRaw("? = any(rcpt_to)", [to]).first("id")) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`no mail for ${to}`);
}

describe("the mail fake's inbox page shows each user only their own mail", () => {
  it("an invitation for a new address is on nobody's /dev/mail; one for an account is on that account's alone", async () => {
    const newcomer = `newcomer-${randomUUID().slice(0, 8)}@test.example`;
    const member = await newUser("mailmember");
    const stranger = await newUser("stranger");
    const newcomerToken = await invite(newcomer);
    const memberToken = await invite(member.email);
    await Promise.all([waitForMail(newcomer), waitForMail(member.email)]);

    for (const who of [owner, stranger]) {
      const page = await who.client.request("GET", "/dev/mail");
      expect(page.status).toBe(200);
      expect(page.text).toContain("Mail fake inbox");
      expect(page.text).not.toContain(newcomerToken);
      expect(page.text).not.toContain(memberToken);
      expect(page.text).not.toContain(newcomer);
    }
    const own = await member.client.request("GET", "/dev/mail");
    expect(own.text).toContain(`/invite/${memberToken}`);
    expect(own.text).not.toContain(newcomerToken);

    // The stranger who somehow had the newcomer's link still could not take another account:
    // the account made through it has the invited address, and the link then works no more.
    const anon = new Client();
    const r = await anon.request("POST", `/api/invitations/${newcomerToken}/accept`, { name: "Taker", password: "a password of mine" });
    expect(r.status).toBe(201);
    expect((await db("users").where({ id: r.json.user_id }).first("email")).email).toBe(newcomer);
    expect((await anon.request("POST", `/api/invitations/${newcomerToken}/accept`, { name: "Again", password: "a password of mine" })).status).toBe(410);
  });

  it("nobody signed in: sign-in first", async () => {
    const r = await new Client().request("GET", "/dev/mail");
    expect(r.status).toBe(307);
  });

  it("accepting for an address that has an account, without being signed in as it, changes nothing", async () => {
    const holder = await newUser("holder");
    const token = await invite(holder.email);
    const hashBefore = (await db("users").where({ email: holder.email }).first("password_hash")).password_hash;
    const anon = await new Client().request("POST", `/api/invitations/${token}/accept`, { name: "Taker", password: "a password of mine" });
    expect(anon.status).toBe(409);
    const other = await newUser("other");
    expect((await other.client.request("POST", `/api/invitations/${token}/accept`, {})).status).toBe(403);
    expect((await db("users").where({ email: holder.email }).first("password_hash")).password_hash).toBe(hashBefore);
    expect(await db("memberships").where({ lab_id: owner.labId, user_id: holder.userId }).first()).toBeUndefined();
    expect(await db("memberships").where({ lab_id: owner.labId, user_id: other.userId }).first()).toBeUndefined();
    expect((await new Client().request("GET", `/api/invitations/${token}`)).json.state).toBe("open");
  });
});

const freePort = () => new Promise<number>((resolve) => {
  const s = createServer().listen(0, "127.0.0.1", () => {
    const { port } = s.address() as { port: number };
    s.close(() => resolve(port));
  });
});

describe("a production deployment never runs the mail fake", () => {
  let app: ChildProcess | undefined;
  afterAll(() => {
    if (app?.pid) process.kill(app.pid, "SIGTERM");
  });

  it("with BURSTWISE_DEPLOYMENT=production, /dev/mail is a 404 even if MAIL_FAKE=1 was left set", async () => {
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    app = spawn(process.execPath, ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)], {
      env: { ...process.env, NODE_ENV: "production", BURSTWISE_DEPLOYMENT: "production", MAIL_FAKE: "1", SMTP_URL: "smtp://127.0.0.1:1", NEXTAUTH_URL: base, DATABASE_URL: testEnv().databaseUrl },
      stdio: "ignore",
    });
    let up = false;
    for (let i = 0; i < 200 && !up; i++) {
      up = await fetch(`${base}/api/health`).then((r) => r.ok, () => false);
      if (!up) await new Promise((r) => setTimeout(r, 150));
    }
    expect(up).toBe(true);
    const c = new Client(base);
    expect((await c.request("GET", "/dev/mail")).status).toBe(404);
    expect(await c.signIn(owner.email, owner.password)).toBe(true);
    expect((await c.request("GET", "/dev/mail")).status).toBe(404);
  });

  it("without SMTP_URL a production deployment refuses to start: the app's settings and npm start both say why", () => {
    const env = { ...process.env, BURSTWISE_DEPLOYMENT: "production", SMTP_URL: "", DATABASE_URL: "postgres://nobody@127.0.0.1:1/none" };
    delete (env as Record<string, string | undefined>).SMTP_URL;
    const settings = spawnSync(process.execPath, ["--import", "tsx", "--input-type=module", "-e", "await import('./lib/env.ts')"], { env, encoding: "utf8", timeout: 30_000 });
    expect(settings.status).not.toBe(0);
    expect(settings.stderr).toContain("SMTP_URL: is required when BURSTWISE_DEPLOYMENT=production");
    const start = spawnSync(process.execPath, ["scripts/start.mjs"], { env, encoding: "utf8", timeout: 30_000 });
    expect(start.status).toBe(1);
    expect(`${start.stdout}${start.stderr}`).toContain("BURSTWISE_DEPLOYMENT=production needs SMTP_URL");
  });
});
