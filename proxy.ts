import { withAuth, type NextRequestWithAuth } from "next-auth/middleware";
import { NextResponse, type NextFetchEvent, type NextRequest } from "next/server";

import { SESSION_COOKIE } from "@/lib/auth/cookies";
import { isSessionCurrent } from "@/lib/auth/session-version";
import { buildPagePolicy, createNonce, NOTHING_POLICY } from "@/lib/content-security-policy";
import { env } from "@/lib/env";
import { appOriginFor, describeCrossSiteWrite } from "@/lib/request-origin";

// Pages that need a signed-in user; anonymous visitors go to sign-in and come back afterwards.
// Route handlers check for themselves (401 JSON).
const SIGN_IN_REQUIRED = /^\/(labs|account)(\/|$)/;

/**
 * Renders a page under a policy with a fresh nonce. Next.js reads the nonce from the request's
 * Content-Security-Policy header and puts it on every script it writes.
 */
function renderWithNonce(req: NextRequest): NextResponse {
  const policy = buildPagePolicy(createNonce(), env.NODE_ENV === "development");
  const headers = new Headers(req.headers);
  headers.set("content-security-policy", policy);
  const res = NextResponse.next({ request: { headers } });
  res.headers.set("content-security-policy", policy);
  return res;
}

const requireSignIn = withAuth((req) => renderWithNonce(req), {
  pages: { signIn: "/signin" },
  secret: env.NEXTAUTH_SECRET,
  // The name next-auth gave the cookie (`__Secure-` over HTTPS), not one guessed again here.
  cookies: { sessionToken: { name: SESSION_COOKIE } },
  // A token from before its user signed out is no session at all (its version is stale).
  callbacks: { authorized: ({ token }) => isSessionCurrent(token?.uid, token?.sv) },
});

/**
 * Every request but static files: /api refuses state-changing requests from other sites (one
 * place for every route handler, next-auth's included) and answers under a policy that allows
 * nothing; pages get a nonce-based policy, and the signed-in ones the sign-in check.
 */
export default async function proxy(req: NextRequest, event: NextFetchEvent) {
  const { pathname } = req.nextUrl;
  if (pathname.startsWith("/api/")) {
    const refusal = describeCrossSiteWrite(req.method, req.headers, appOriginFor(env.NEXTAUTH_URL, req.nextUrl.origin));
    const res = refusal ? NextResponse.json({ error: refusal }, { status: 403 }) : NextResponse.next();
    res.headers.set("content-security-policy", NOTHING_POLICY);
    return res;
  }
  if (!SIGN_IN_REQUIRED.test(pathname)) return renderWithNonce(req);
  const res = await requireSignIn(req as NextRequestWithAuth, event);
  // The redirect to sign-in renders nothing, so it gets the policy that allows nothing.
  if (res instanceof Response && !res.headers.has("content-security-policy")) res.headers.set("content-security-policy", NOTHING_POLICY);
  return res;
}

// Static build files carry no page and need no policy; everything else passes through here.
export const config = { matcher: ["/((?!_next/static|_next/image|favicon\\.ico).*)"] };
