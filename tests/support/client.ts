import { randomUUID } from "node:crypto";

import { testEnv } from "./env";

/** A tiny HTTP client that keeps cookies, like a browser session, for route tests. */
export class Client {
  private cookies = new Map<string, string>();
  /**
   * The client address this client claims, sent as X-Forwarded-For (npm test runs the app as if
   * behind one trusted proxy): per-address limits then count this client alone. Unset: 127.0.0.1.
   */
  address?: string;
  constructor(readonly baseUrl = testEnv().baseUrl, private bearer?: string) {}

  static withToken(token: string) {
    return new Client(testEnv().baseUrl, token);
  }

  async request(method: string, path: string, body?: unknown, raw?: string): Promise<{ status: number; json: any; text: string }> {
    const headers: Record<string, string> = {};
    if (this.cookies.size) headers.cookie = [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
    if (this.bearer) headers.authorization = `Bearer ${this.bearer}`;
    if (this.address) headers["x-forwarded-for"] = this.address;
    // A FormData body goes as multipart/form-data (fetch sets the boundary); anything else as JSON.
    const isForm = body instanceof FormData;
    if ((body !== undefined && !isForm) || raw !== undefined) headers["content-type"] = "application/json";
    const payload = raw ?? (body === undefined ? undefined : isForm ? body : JSON.stringify(body));
    const res = await fetch(this.baseUrl + path, { method, headers, body: payload, redirect: "manual" });
    this.keepCookies(res);
    const text = await res.text();
    let json: any = null;
    try { json = JSON.parse(text); } catch { /* not JSON */ }
    return { status: res.status, json, text };
  }

  /** Another client holding a copy of this one's cookies (a session token taken elsewhere). */
  copy(): Client {
    const c = new Client(this.baseUrl, this.bearer);
    c.cookies = new Map(this.cookies);
    c.address = this.address;
    return c;
  }

  /** The Cookie header this client sends (for raw fetches, e.g. reading a download's bytes). */
  cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
  }

  private keepCookies(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(";");
      const i = pair!.indexOf("=");
      const name = pair!.slice(0, i);
      const value = pair!.slice(i + 1);
      if (value === "" || /max-age=0/i.test(c)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  /** Signs in through next-auth's credentials flow; true when a session results. */
  async signIn(email: string, password: string): Promise<boolean> {
    const res = await this.postSignIn(email, password);
    this.keepCookies(res);
    const session = await this.request("GET", "/api/auth/session");
    return Boolean(session.json?.user?.id);
  }

  /** next-auth's credentials callback as the browser form posts it; the raw answer (JSON, keeps no cookies). */
  async postSignIn(email: string, password: string, extra: Record<string, string> = {}): Promise<Response> {
    const csrf = await this.request("GET", "/api/auth/csrf");
    const form = new URLSearchParams({ csrfToken: csrf.json.csrfToken, email, password, json: "true", ...extra });
    const headers: Record<string, string> = { "content-type": "application/x-www-form-urlencoded", cookie: this.cookieHeader() };
    if (this.address) headers["x-forwarded-for"] = this.address;
    return fetch(`${this.baseUrl}/api/auth/callback/credentials`, { method: "POST", headers, body: form, redirect: "manual" });
  }
}

/** A client address of its own (IPv6 documentation range), so per-address limits count one test alone. */
export const uniqueAddress = (): string => `2001:db8::${randomUUID().slice(0, 4)}:${randomUUID().slice(0, 4)}`;

/** Signs up a fresh user with its own lab; returns the signed-in client and ids. */
export async function newUser(prefix = "user"): Promise<{ client: Client; email: string; password: string; userId: string; labId: string }> {
  const email = `${prefix}-${randomUUID().slice(0, 8)}@test.example`;
  const password = "correct horse battery";
  const client = new Client();
  // Each sign-up from an address of its own: the suite signs up far more users than one
  // address may (SIGNUP_PER_ADDRESS_PER_H).
  client.address = uniqueAddress();
  const res = await client.request("POST", "/api/signup", { email, name: prefix, password });
  if (res.status !== 202) throw new Error(`sign-up failed: ${res.status} ${res.text}`);
  if (!(await client.signIn(email, password))) throw new Error("sign-in after sign-up failed");
  // The sign-up answer names no ids (it is the same for a taken address); the session does.
  const session = await client.request("GET", "/api/auth/session");
  const userId = String(session.json.user.id);
  const labId = String(session.json.user.labs[0].id);
  return { client, email, password, userId, labId };
}
