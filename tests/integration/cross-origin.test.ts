// Cross-origin writes: a browser carrying a Burstwise session cookie on a foreign site's form or
// fetch must not change anything; JSON routes take only JSON and upload routes only multipart.
import { readdirSync, readFileSync, statSync } from "node:fs";
import { join, relative } from "node:path";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testDb } from "../support/db";
import { testEnv } from "../support/env";

const EVIL = "http://evil.example";
const UNSAFE = ["POST", "PUT", "PATCH", "DELETE"];

/** Every route file under app/api with the state-changing methods it exports. */
function listStateChangingRoutes(): { file: string; method: string }[] {
  const out: { file: string; method: string }[] = [];
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const p = join(dir, name);
      if (statSync(p).isDirectory()) walk(p);
      else if (name === "route.ts") {
        const src = readFileSync(p, "utf8");
        for (const m of UNSAFE) {
          // `export const POST = …`, `export async function POST`, or `export { handler as POST }`.
          if (new RegExp(`export\\s+(const|async\\s+function|function)\\s+${m}\\b|export\\s*\\{[^}]*\\bas\\s+${m}\\b`).test(src)) {
            out.push({ file: relative("app/api", dir), method: m });
          }
        }
      }
    }
  };
  walk("app/api");
  return out;
}

/** A concrete URL for a route folder: each dynamic segment becomes an id-like value. */
function pathFor(folder: string): string[] {
  if (folder.includes("[...nextauth]")) return ["/api/auth/callback/credentials", "/api/auth/signout"];
  return ["/api/" + folder.split("/").map((s) => (s.startsWith("[") ? "1" : s)).join("/")];
}

let db: Knex;
let owner: Awaited<ReturnType<typeof newUser>>;

async function send(client: Client | null, method: string, path: string, init: { headers?: Record<string, string>; body?: BodyInit } = {}) {
  const headers: Record<string, string> = { ...(init.headers ?? {}) };
  if (client) headers.cookie = client.cookieHeader();
  const res = await fetch(testEnv().baseUrl + path, { method, headers, body: init.body, redirect: "manual" });
  const text = await res.text();
  let json: any = null;
  try { json = JSON.parse(text); } catch { /* not JSON */ }
  return { status: res.status, json, text };
}

beforeAll(async () => {
  db = testDb();
  owner = await newUser("csrf");
});

afterAll(async () => {
  await db.destroy();
});

describe("cross-origin writes with a session cookie", () => {
  const routes = listStateChangingRoutes();

  it("finds the state-changing route handlers under app/api (the table below cannot go stale)", () => {
    // Sanity of the scan itself: a few routes we know change state.
    const names = routes.map((r) => `${r.method} ${r.file}`);
    expect(names).toContain("PATCH labs/[labId]");
    expect(names).toContain("POST tokens");
    expect(names).toContain("POST auth/[...nextauth]");
    expect(routes.length).toBeGreaterThanOrEqual(25);
  });

  it("every state-changing route refuses a foreign Origin with 403 naming origin, text/plain or multipart alike", async () => {
    const failures: string[] = [];
    for (const { file, method } of routes) {
      for (const path of pathFor(file)) {
        for (const body of [`{"name":"pwned"}`, (() => { const f = new FormData(); f.set("name", "pwned"); return f; })()]) {
          const headers: Record<string, string> = { origin: EVIL };
          if (typeof body === "string") headers["content-type"] = "text/plain";
          const r = await send(owner.client, method, path, { headers, body });
          if (r.status !== 403 || !/^origin: /.test(r.json?.error ?? "")) failures.push(`${method} ${path} (${typeof body === "string" ? "text/plain" : "multipart"}): ${r.status} ${r.text.slice(0, 120)}`);
        }
      }
    }
    expect(failures).toEqual([]);
  });

  it("a foreign rename of the lab changes nothing; the same rename from the app's own origin works", async () => {
    const before = (await db("labs").where({ id: owner.labId }).first("name")).name;
    const evil = await send(owner.client, "PATCH", `/api/labs/${owner.labId}`, { headers: { origin: EVIL, "content-type": "text/plain" }, body: `{"name":"Taken over"}` });
    expect(evil.status).toBe(403);
    expect(evil.json.error).toMatch(/^origin: /);
    expect((await db("labs").where({ id: owner.labId }).first("name")).name).toBe(before);
    const own = await send(owner.client, "PATCH", `/api/labs/${owner.labId}`, { headers: { origin: testEnv().baseUrl, "content-type": "application/json" }, body: `{"name":"Renamed at home"}` });
    expect(own.status, own.text).toBe(200);
    expect((await db("labs").where({ id: owner.labId }).first("name")).name).toBe("Renamed at home");
  });

  it("without an Origin, a cross-site Sec-Fetch-Site or a foreign Referer is refused too; Origin: null as well", async () => {
    const tokensBefore = Number((await db("api_tokens").where({ user_id: owner.userId }).count({ n: "*" }))[0]!.n);
    for (const headers of [{ "sec-fetch-site": "cross-site" }, { referer: `${EVIL}/page` }, { origin: "null" }] as Record<string, string>[]) {
      const r = await send(owner.client, "POST", "/api/tokens", { headers: { ...headers, "content-type": "application/json" }, body: `{"name":"stolen"}` });
      expect(r.status, JSON.stringify(headers)).toBe(403);
      expect(r.json.error).toMatch(/^origin: /);
    }
    expect(Number((await db("api_tokens").where({ user_id: owner.userId }).count({ n: "*" }))[0]!.n)).toBe(tokensBefore);
    const same = await send(owner.client, "POST", "/api/tokens", { headers: { "sec-fetch-site": "same-origin", "content-type": "application/json" }, body: `{"name":"mine"}` });
    expect(same.status, same.text).toBe(201);
  });

  it("an API token request (no cookie) is not subject to the Origin check", async () => {
    const t = await owner.client.request("POST", "/api/tokens", { name: "script" });
    expect(t.status).toBe(201);
    const r = await send(null, "PUT", "/api/me/notifications", {
      headers: { authorization: `Bearer ${t.json.token}`, origin: EVIL, "content-type": "application/json" },
      body: JSON.stringify({ lab_id: owner.labId, runs: "off" }),
    });
    expect(r.status, r.text).toBe(200);
  });

  it("GET stays open to any Origin (reads are protected by the same-origin policy, not by this check)", async () => {
    const r = await send(owner.client, "GET", `/api/labs/${owner.labId}`, { headers: { origin: EVIL } });
    expect(r.status).toBe(200);
  });
});

describe("JSON only where JSON is meant", () => {
  it("a JSON route refuses text/plain and multipart bodies with 415 naming content-type, and stores nothing", async () => {
    const before = (await db("labs").where({ id: owner.labId }).first("name")).name;
    const plain = await send(owner.client, "PATCH", `/api/labs/${owner.labId}`, { headers: { "content-type": "text/plain" }, body: `{"name":"Plain"}` });
    expect(plain.status).toBe(415);
    expect(plain.json.error).toMatch(/^content-type: /);
    const form = new FormData();
    form.set("name", "Multipart");
    const multi = await send(owner.client, "PATCH", `/api/labs/${owner.labId}`, { body: form });
    expect(multi.status).toBe(415);
    expect(multi.json.error).toMatch(/^content-type: /);
    const none = await send(owner.client, "POST", "/api/tokens", { body: `{"name":"untyped"}` });
    expect(none.status).toBe(415);
    expect((await db("labs").where({ id: owner.labId }).first("name")).name).toBe(before);
    // A charset parameter is still JSON.
    const ok = await send(owner.client, "PATCH", `/api/labs/${owner.labId}`, { headers: { "content-type": "application/json; charset=utf-8" }, body: `{"name":"${before}"}` });
    expect(ok.status, ok.text).toBe(200);
  });

  it("an upload route refuses a JSON body with 415 naming content-type", async () => {
    const r = await owner.client.request("POST", "/api/datasets", { lab_id: owner.labId, name: "x" });
    expect(r.status).toBe(415);
    expect(r.json.error).toMatch(/^content-type: /);
    const c = await owner.client.request("POST", "/api/circuits/upload", { lab_id: owner.labId });
    expect(c.status).toBe(415);
    expect(c.json.error).toMatch(/^content-type: /);
  });
});
