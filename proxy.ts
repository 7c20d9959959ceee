import { withAuth } from "next-auth/middleware";

// Pages need a signed-in user; anonymous visitors go to sign-in and come back afterwards.
// Route handlers check for themselves (401 JSON), so /api is not matched here.
export default withAuth({ pages: { signIn: "/signin" } });

export const config = { matcher: ["/labs/:path*", "/account/:path*"] };
