// Browser defences in the answers themselves: a content security policy, no framing, no MIME
// sniffing and a referrer policy, on pages, API answers, API errors and 404s alike.
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser } from "../support/client";
import { testEnv } from "../support/env";

let me: Awaited<ReturnType<typeof newUser>>;

async function get(path: string, client?: Client) {
  const res = await fetch(testEnv().baseUrl + path, { headers: client ? { cookie: client.cookieHeader() } : {}, redirect: "manual" });
  return { status: res.status, headers: res.headers, text: await res.text() };
}

/** The CSP's directives by name, e.g. `{ "script-src": ["'self'", "'nonce-…'"] }`. */
function directives(csp: string): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const part of csp.split(";")) {
    const [name, ...values] = part.trim().split(/\s+/);
    if (name) out[name] = values;
  }
  return out;
}

function expectDefences(h: Headers, where: string) {
  expect(h.get("x-content-type-options"), where).toBe("nosniff");
  expect(h.get("referrer-policy"), where).toBe("same-origin");
  expect(h.get("x-frame-options"), where).toBe("DENY");
  const csp = h.get("content-security-policy");
  expect(csp, where).toBeTruthy();
  const d = directives(csp!);
  expect(d["frame-ancestors"], where).toEqual(["'none'"]);
  expect(d["object-src"] ?? d["default-src"], where).toEqual(["'none'"]);
  for (const values of Object.values(d)) expect(values, where).not.toContain("'unsafe-eval'");
  return d;
}

beforeAll(async () => {
  me = await newUser("headers");
});

afterAll(() => undefined);

describe("security headers", () => {
  it("a page: a nonce-based script policy, a fresh nonce on each answer, and every script carries it", async () => {
    const a = await get("/signin");
    expect(a.status).toBe(200);
    const d = expectDefences(a.headers, "page");
    expect(d["default-src"]).toEqual(["'self'"]);
    expect(d["script-src"]).not.toContain("'unsafe-inline'");
    const nonce = d["script-src"]!.find((v) => v.startsWith("'nonce-"))?.slice(7, -1);
    expect(nonce).toBeTruthy();
    const scripts = [...a.text.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const s of scripts) expect(s).toContain(`nonce="${nonce}"`);
    const b = await get("/signin");
    const other = directives(b.headers.get("content-security-policy")!)["script-src"]!.find((v) => v.startsWith("'nonce-"));
    expect(other).not.toBe(`'nonce-${nonce}'`);
  });

  it("a signed-in page (the lab overview) carries them too", async () => {
    const r = await get(`/labs/${me.labId}`, me.client);
    expect(r.status).toBe(200);
    expectDefences(r.headers, "lab page");
  });

  it("an API answer and an API error", async () => {
    const ok = await get("/api/health");
    expect(ok.status).toBe(200);
    expectDefences(ok.headers, "api answer");
    const err = await get("/api/labs");
    expect(err.status).toBe(401);
    expectDefences(err.headers, "api error");
    const json = await fetch(`${testEnv().baseUrl}/api/labs/${me.labId}`, { method: "PATCH", headers: { cookie: me.client.cookieHeader(), "content-type": "application/json" }, body: "{" });
    expect(json.status).toBe(400);
    expectDefences(json.headers, "api 400");
  });

  it("a 404 page, for an unknown path and for a lab that is not yours", async () => {
    const unknown = await get("/no-such-page");
    expect(unknown.status).toBe(404);
    expectDefences(unknown.headers, "404");
    const notMine = await get("/labs/999999999", me.client);
    expect(notMine.status).toBe(404);
    expectDefences(notMine.headers, "404 lab");
  });

  it("the sign-in redirect for an anonymous visitor", async () => {
    const r = await get(`/labs/${me.labId}`);
    expect(r.status).toBeGreaterThanOrEqual(300);
    expect(r.status).toBeLessThan(400);
    expect(r.headers.get("x-content-type-options")).toBe("nosniff");
  });
});
