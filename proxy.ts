import { withAuth } from "next-auth/middleware";

import { isSessionCurrent } from "@/lib/auth/session-version";

// Pages need a signed-in user; anonymous visitors go to sign-in and come back afterwards.
// Route handlers check for themselves (401 JSON), so /api is not matched here.
export default withAuth({
  pages: { signIn: "/signin" },
  // A token from before its user signed out is no session at all (its version is stale).
  callbacks: { authorized: ({ token }) => isSessionCurrent(token?.uid, token?.sv) },
});

export const config = { matcher: ["/labs/:path*", "/account/:path*"] };
