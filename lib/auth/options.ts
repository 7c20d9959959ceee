import type { NextAuthOptions, Session } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";

import { getClientAddress } from "@/lib/auth/client-address";
import { SESSION_MAX_AGE_S, USE_SECURE_COOKIES } from "@/lib/auth/cookies";
import { recordSignInSuccess, requireSignInAllowed } from "@/lib/auth/limits";
import { verifyPassword } from "@/lib/auth/password";
import { isSessionCurrent } from "@/lib/auth/session-version";
import { bumpSessionVersion, getUserByEmail, listLabsForUser } from "@/lib/data/users";
import { env } from "@/lib/env";
import { toSafeRedirect } from "@/lib/view/safe-redirect";
import { SignInInput } from "@/lib/schemas/auth";

// A fixed hash to compare against when the e-mail is unknown, so both failures take as long.
const DUMMY_HASH = "$2b$12$C6UzMDM.H6dfI/f/IKcEeO5b7w1yH0kH3k7K1m4uQ0QjYbOa8mQmW";

export const authOptions: NextAuthOptions = {
  session: { strategy: "jwt", maxAge: SESSION_MAX_AGE_S },
  secret: env.NEXTAUTH_SECRET,
  // Secure (and __Secure-/__Host- named) cookies whenever the app is served over HTTPS.
  useSecureCookies: USE_SECURE_COOKIES,
  pages: { signIn: "/signin" },
  providers: [
    CredentialsProvider({
      name: "E-mail and password",
      credentials: { email: { label: "E-mail", type: "email" }, password: { label: "Password", type: "password" } },
      async authorize(credentials, req) {
        const parsed = SignInInput.safeParse(credentials);
        if (!parsed.success) return null;
        const address = getClientAddress(req?.headers ?? {});
        // Counted before the (slow) password check, so parallel guesses are counted too.
        await requireSignInAllowed(parsed.data.email, address);
        const user = await getUserByEmail(parsed.data.email);
        const ok = await verifyPassword(parsed.data.password, user?.passwordHash ?? DUMMY_HASH);
        if (!user || !ok) return null;
        await recordSignInSuccess(parsed.data.email, address);
        return { id: String(user.id), email: user.email, name: user.name, sessionVersion: Number(user.sessionVersion) };
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user) {
        token.uid = user.id;
        token.sv = user.sessionVersion;
        return token;
      }
      // A token from before a sign-out (or of a deleted user) is emptied: signed out.
      if (!(await isSessionCurrent(token.uid, token.sv))) return {};
      return token;
    },
    // Labs and roles are read fresh on every session read, so a role change applies at once.
    async session({ session, token }) {
      // An empty session is "nobody signed in" to getServerSession and to the browser.
      if (!token.uid) return {} as Session;
      if (session.user) {
        session.user.id = token.uid;
        session.user.labs = await listLabsForUser(token.uid);
      }
      return session;
    },
    // Only same-origin targets (after URL parsing), whatever callbackUrl a request carried.
    redirect({ url, baseUrl }) {
      return `${baseUrl}${toSafeRedirect(url, "/", baseUrl)}`;
    },
  },
  events: {
    // Signing out ends every copy of the session token, not only the cookie in this browser.
    async signOut({ token }) {
      if (token?.uid) await bumpSessionVersion(token.uid);
    },
  },
};
