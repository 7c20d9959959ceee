import { randomUUID } from "node:crypto";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser, uniqueAddress } from "../support/client";
import { testDb } from "../support/db";

// Defaults of lib/env.ts (npm test sets none of them): 5 wrong sign-ins per account, 20 per
// client address, a first lock of 30 s; 5 sign-ups per address and hour.
const ACCOUNT_MAX = 5;
const ADDRESS_MAX = 20;
const SIGNUPS_PER_H = 5;

let db: Knex;

beforeAll(() => {
  db = testDb();
});
afterAll(async () => {
  await db.destroy();
});

/** A client from an address of its own (the suite plays the trusted proxy). */
function clientAt(address = uniqueAddress()): Client {
  const c = new Client();
  c.address = address;
  return c;
}

async function attempt(c: Client, email: string, password: string) {
  const res = await c.postSignIn(email, password);
  const body = (await res.json()) as { url?: string; error?: string; retry_after_s?: number };
  return { status: res.status, body, retryAfter: res.headers.get("retry-after") };
}

/** Ends the lock of a key now, as if its time had passed. */
const expireLock = (kind: string, key: string) => db("auth_limits").where({ kind, key }).update({ locked_until: db.raw("now() - interval '1 second'") });

describe("sign-in attempts are limited per account", () => {
  it("30 wrong passwords in a row: 5 are checked, the rest are 429 with a wait; then the right password is refused too", async () => {
    const { email, password } = await newUser("target");
    const attacker = clientAt();
    const statuses: number[] = [];
    for (let i = 0; i < 30; i++) statuses.push((await attempt(attacker, email, `wrong guess ${i}`)).status);
    expect(statuses.slice(0, ACCOUNT_MAX)).toEqual(Array(ACCOUNT_MAX).fill(401));
    expect(statuses.slice(ACCOUNT_MAX)).toEqual(Array(30 - ACCOUNT_MAX).fill(429));

    // The right password, even from another address, during the lock: still 429, and no session.
    const owner = clientAt();
    const right = await attempt(owner, email, password);
    expect(right.status).toBe(429);
    expect(right.body.error).toMatch(/^email: too many sign-in attempts for this account; try again in \d+ s$/);
    expect(Number(right.retryAfter)).toBeGreaterThan(0);
    expect(Number(right.retryAfter)).toBeLessThanOrEqual(30);
    expect(right.body.retry_after_s).toBe(Number(right.retryAfter));
    expect(new URL(right.body.url!).searchParams.get("error")).toBe(right.body.error); // what next-auth's signIn() reads
    expect((await owner.request("GET", "/api/auth/session")).json).toEqual({});

    // Once the lock is over the right password works, and clears the account's counter.
    await expireLock("signin_account", email);
    expect(await owner.signIn(email, password)).toBe(true);
    expect(await db("auth_limits").where({ kind: "signin_account", key: email }).first()).toBeUndefined();
  });

  it("the lock grows: after it ends one more try is allowed, and another failure locks for twice as long", async () => {
    const { email } = await newUser("grow");
    const c = clientAt();
    for (let i = 0; i < ACCOUNT_MAX; i++) expect((await attempt(c, email, "nope nope")).status).toBe(401);
    const first = await attempt(c, email, "nope nope");
    expect(first.status).toBe(429);
    expect(Number(first.retryAfter)).toBe(30);

    await expireLock("signin_account", email);
    expect((await attempt(c, email, "still wrong")).status).toBe(401);
    const second = await attempt(c, email, "still wrong");
    expect(second.status).toBe(429);
    expect(Number(second.retryAfter)).toBe(60);

    await expireLock("signin_account", email);
    expect((await attempt(c, email, "wrong again")).status).toBe(401);
    expect(Number((await attempt(c, email, "wrong again")).retryAfter)).toBe(120);
  });

  it("guesses sent in parallel are counted before the password check: at most 5 of 20 are checked", async () => {
    const { email, password } = await newUser("burst");
    // One client each: a client's CSRF cookie is per jar, and parallel fetches of it would overwrite one another.
    const address = uniqueAddress();
    const results = await Promise.all(Array.from({ length: 20 }, (_, i) => attempt(clientAt(address), email, `parallel guess ${i}`)));
    const checked = results.filter((r) => r.status === 401).length;
    expect(checked).toBeLessThanOrEqual(ACCOUNT_MAX);
    expect(results.filter((r) => r.status === 429).length).toBe(20 - checked);
    expect((await attempt(clientAt(), email, password)).status).toBe(429);
  });

  it("an e-mail without an account is limited the same way (the answers do not tell which is which)", async () => {
    const email = `nobody-${randomUUID().slice(0, 8)}@test.example`;
    const c = clientAt();
    const statuses: number[] = [];
    for (let i = 0; i < ACCOUNT_MAX + 1; i++) statuses.push((await attempt(c, email, "anything at all")).status);
    expect(statuses).toEqual([...Array(ACCOUNT_MAX).fill(401), 429]);
  });
});

describe("sign-in attempts are limited per client address", () => {
  it("one address spraying wrong passwords over many accounts is locked after 20; another address is not", async () => {
    const spray = clientAt();
    const statuses: number[] = [];
    for (let i = 0; i <= ADDRESS_MAX; i++) statuses.push((await attempt(spray, `spray-${i}-${randomUUID().slice(0, 6)}@test.example`, "password123")).status);
    expect(statuses.slice(0, ADDRESS_MAX)).toEqual(Array(ADDRESS_MAX).fill(401));
    expect(statuses[ADDRESS_MAX]).toBe(429);

    const { email, password } = await newUser("bystander");
    const fromSpray = await attempt(spray, email, password);
    expect(fromSpray.status).toBe(429);
    expect(fromSpray.body.error).toMatch(/^email: too many sign-in attempts from your network address; try again in \d+ s$/);
    expect(await clientAt().signIn(email, password)).toBe(true);
  });

  it("right passwords do not use up an address's allowance", async () => {
    const { email, password } = await newUser("regular");
    const c = clientAt();
    for (let i = 0; i < ADDRESS_MAX + 5; i++) expect((await attempt(c, email, password)).status).toBe(200);
  });
});

describe("sign-ups are limited per client address", () => {
  it("5 sign-ups an hour from one address; the 6th is a 429 naming the wait, and writes nothing", async () => {
    const c = clientAt();
    const body = () => ({ email: `many-${randomUUID().slice(0, 8)}@test.example`, name: "Many", password: "long enough password" });
    for (let i = 0; i < SIGNUPS_PER_H; i++) expect((await c.request("POST", "/api/signup", body())).status).toBe(202);
    const before = await db("users").count("* as n").first();
    const extra = body();
    const r = await c.request("POST", "/api/signup", extra);
    expect(r.status).toBe(429);
    expect(r.json.error).toMatch(/^signup: too many accounts created from your network address; try again in \d+ min$/);
    expect(await db("users").count("* as n").first()).toEqual(before);
    expect(await db("users").where({ email: extra.email }).first()).toBeUndefined();
    // Another address may still sign up.
    expect((await clientAt().request("POST", "/api/signup", body())).status).toBe(202);
  });
});
