import { getServerSession, type Session } from "next-auth";
import { redirect } from "next/navigation";

import { authOptions } from "@/lib/auth/options";

export type PageUser = NonNullable<Session["user"]>;

/** The signed-in user for a page (with labs and roles); redirects to sign-in otherwise. */
export async function requirePageUser(callbackUrl?: string): Promise<PageUser> {
  const session = await getServerSession(authOptions);
  if (!session?.user?.id) redirect(`/signin${callbackUrl ? `?callbackUrl=${encodeURIComponent(callbackUrl)}` : ""}`);
  return session.user;
}
