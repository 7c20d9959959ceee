import { encode, getToken } from "next-auth/jwt";
import { cookies } from "next/headers";

import { SESSION_COOKIE, SESSION_MAX_AGE_S, USE_SECURE_COOKIES } from "@/lib/auth/cookies";
import { env } from "@/lib/env";

/**
 * Re-issues the caller's session cookie under `sessionVersion` (from a route handler), so the
 * browser that changed the password stays signed in while every other copy of the old token,
 * issued under the old version, is refused. The cookie has the name and attributes next-auth
 * gives its own (HttpOnly, SameSite=Lax, Secure over HTTPS) and a fresh expiry.
 * @returns false when the request carries no readable session token (nothing is set).
 */
export async function renewSessionCookie(req: Request, sessionVersion: number): Promise<boolean> {
  // Without a configured secret (a development server) next-auth derives its own; only it can sign.
  if (!env.NEXTAUTH_SECRET) return false;
  const jar = await cookies();
  const token = await getToken({ req: { headers: req.headers, cookies: jar } as never, secret: env.NEXTAUTH_SECRET, cookieName: SESSION_COOKIE });
  if (!token?.uid) return false;
  const value = await encode({ token: { ...token, sv: sessionVersion }, secret: env.NEXTAUTH_SECRET, maxAge: SESSION_MAX_AGE_S });
  jar.set(SESSION_COOKIE, value, {
    httpOnly: true, sameSite: "lax", path: "/", secure: USE_SECURE_COOKIES, expires: new Date(Date.now() + SESSION_MAX_AGE_S * 1000),
  });
  return true;
}
