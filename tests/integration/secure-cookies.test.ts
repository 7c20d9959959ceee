// Session cookies over HTTPS: a second instance of the built app (`next start`, the test
// database) whose public address is https://… must set Secure, `__Secure-`/`__Host-` named
// cookies, and still find them (the proxy's sign-in check, the session, the password change).
// The test server itself (NEXTAUTH_URL http://…) sets plain ones that work without Secure.
import { spawn, type ChildProcess } from "node:child_process";
import { createServer } from "node:net";

import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { Client, newUser, uniqueAddress } from "../support/client";
import { testEnv } from "../support/env";

let https: (ChildProcess & { output: string[] }) | undefined;
let httpsBase = "";

const freePort = () =>
  new Promise<number>((resolve, reject) => {
    const srv = createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as { port: number };
      srv.close(() => resolve(port));
    });
  });

beforeAll(async () => {
  const port = await freePort();
  httpsBase = `http://127.0.0.1:${port}`;
  // Served over plain HTTP here, as behind a TLS-terminating proxy: what counts is NEXTAUTH_URL.
  https = spawn(process.execPath, ["node_modules/next/dist/bin/next", "start", "-H", "127.0.0.1", "-p", String(port)], {
    env: { ...process.env, NODE_ENV: "production", NEXTAUTH_URL: `https://127.0.0.1:${port}` },
    stdio: ["ignore", "pipe", "pipe"],
    detached: true,
  }) as ChildProcess & { output: string[] };
  https.output = [];
  https.stdout!.on("data", (d) => https!.output.push(String(d)));
  https.stderr!.on("data", (d) => https!.output.push(String(d)));
  const until = Date.now() + 60_000;
  for (;;) {
    try {
      if ((await fetch(`${httpsBase}/api/health`)).ok) break;
    } catch { /* not up yet */ }
    if (Date.now() > until) throw new Error(`the HTTPS-configured app did not start:\n${https.output.join("").slice(-3000)}`);
    await new Promise((r) => setTimeout(r, 300));
  }
}, 90_000);

afterAll(async () => {
  if (!https || https.exitCode !== null) return;
  const exited = new Promise((r) => https!.once("exit", r));
  process.kill(-https.pid!, "SIGTERM");
  const timer = setTimeout(() => process.kill(-https!.pid!, "SIGKILL"), 10_000);
  await exited;
  clearTimeout(timer);
});

/** Set-Cookie lines of a response by cookie name. */
function cookiesOf(res: Response): Map<string, string> {
  return new Map(res.headers.getSetCookie().map((c) => [c.slice(0, c.indexOf("=")), c]));
}
const attributes = (setCookie: string) => setCookie.split(";").slice(1).map((a) => a.trim().toLowerCase());

describe("session cookies follow the app's public address", () => {
  it("with an https NEXTAUTH_URL: Secure __Secure-/__Host- cookies, which the proxy, the session and a password change use", async () => {
    const u = await newUser("secure");
    const c = new Client(httpsBase);
    c.address = uniqueAddress();
    const csrf = await fetch(`${httpsBase}/api/auth/csrf`);
    const csrfCookie = [...cookiesOf(csrf)].find(([name]) => name.endsWith("next-auth.csrf-token"));
    expect(csrfCookie?.[0]).toBe("__Host-next-auth.csrf-token");
    expect(attributes(csrfCookie![1])).toContain("secure");

    const res = await c.postSignIn(u.email, u.password);
    expect(res.status).toBe(200);
    const set = cookiesOf(res);
    expect([...set.keys()]).toContain("__Secure-next-auth.session-token");
    expect([...set.keys()]).not.toContain("next-auth.session-token");
    const session = set.get("__Secure-next-auth.session-token")!;
    expect(attributes(session)).toEqual(expect.arrayContaining(["secure", "httponly", "samesite=lax", "path=/"]));

    // The session works by that name: for the API, the session endpoint, and a page behind the proxy.
    expect(await c.signIn(u.email, u.password)).toBe(true);
    expect(c.cookieHeader()).toMatch(/(^|; )__Secure-next-auth\.session-token=/);
    expect((await c.request("GET", "/api/labs")).status).toBe(200);
    expect((await c.request("GET", "/api/auth/session")).json.user.id).toBe(u.userId);
    const page = await fetch(`${httpsBase}/labs/${u.labId}`, { headers: { cookie: c.cookieHeader() }, redirect: "manual" });
    expect(page.status).toBe(200);

    // The password change renews the cookie under the same name, Secure too.
    const changed = await fetch(`${httpsBase}/api/account/password`, {
      method: "POST", headers: { cookie: c.cookieHeader(), "content-type": "application/json", "x-forwarded-for": c.address! },
      body: JSON.stringify({ current_password: u.password, new_password: "renewed over https" }),
    });
    expect(changed.status, await changed.clone().text()).toBe(200);
    expect(((await changed.json()) as { signed_in: boolean }).signed_in).toBe(true);
    const renewed = cookiesOf(changed).get("__Secure-next-auth.session-token");
    expect(renewed).toBeDefined();
    expect(attributes(renewed!)).toEqual(expect.arrayContaining(["secure", "httponly", "samesite=lax", "path=/"]));
    const renewedCookie = renewed!.slice(0, renewed!.indexOf(";"));
    const after = await fetch(`${httpsBase}/labs/${u.labId}`, { headers: { cookie: renewedCookie }, redirect: "manual" });
    expect(after.status).toBe(200);
    // The cookie from before the change is signed out.
    const stale = await fetch(`${httpsBase}/labs/${u.labId}`, { headers: { cookie: c.cookieHeader() }, redirect: "manual" });
    expect(stale.status).toBe(307);
  });

  it("with an http NEXTAUTH_URL (the test server): plain-named cookies without Secure, which work", async () => {
    const u = await newUser("plain");
    const c = new Client();
    c.address = uniqueAddress();
    const res = await c.postSignIn(u.email, u.password);
    const set = cookiesOf(res);
    const session = set.get("next-auth.session-token");
    expect(session).toBeDefined();
    expect([...set.keys()].some((n) => n.startsWith("__Secure-") || n.startsWith("__Host-"))).toBe(false);
    expect(attributes(session!)).not.toContain("secure");
    expect(attributes(session!)).toEqual(expect.arrayContaining(["httponly", "samesite=lax", "path=/"]));
    expect(await c.signIn(u.email, u.password)).toBe(true);
    const page = await fetch(`${testEnv().baseUrl}/labs/${u.labId}`, { headers: { cookie: c.cookieHeader() }, redirect: "manual" });
    expect(page.status).toBe(200);
  });
});
