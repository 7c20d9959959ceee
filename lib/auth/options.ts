import type { NextAuthOptions } from "next-auth";
import CredentialsProvider from "next-auth/providers/credentials";

import { verifyPassword } from "@/lib/auth/password";
import { getUserByEmail, listLabsForUser } from "@/lib/data/users";
import { env } from "@/lib/env";
import { SignInInput } from "@/lib/schemas/auth";

// A fixed hash to compare against when the e-mail is unknown, so both failures take as long.
const DUMMY_HASH = "$2b$12$C6UzMDM.H6dfI/f/IKcEeO5b7w1yH0kH3k7K1m4uQ0QjYbOa8mQmW";

export const authOptions: NextAuthOptions = {
  session: { strategy: "jwt", maxAge: 7 * 24 * 3600 },
  secret: env.NEXTAUTH_SECRET,
  pages: { signIn: "/signin" },
  providers: [
    CredentialsProvider({
      name: "E-mail and password",
      credentials: { email: { label: "E-mail", type: "email" }, password: { label: "Password", type: "password" } },
      async authorize(credentials) {
        const parsed = SignInInput.safeParse(credentials);
        if (!parsed.success) return null;
        const user = await getUserByEmail(parsed.data.email);
        const ok = await verifyPassword(parsed.data.password, user?.passwordHash ?? DUMMY_HASH);
        if (!user || !ok) return null;
        return { id: String(user.id), email: user.email, name: user.name };
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user) token.uid = user.id;
      return token;
    },
    // Labs and roles are read fresh on every session read, so a role change applies at once.
    async session({ session, token }) {
      if (session.user && token.uid) {
        session.user.id = token.uid;
        session.user.labs = await listLabsForUser(token.uid);
      }
      return session;
    },
  },
};
