import { getServerSession, type Session } from "next-auth";
import { notFound, redirect } from "next/navigation";

import { authOptions } from "@/lib/auth/options";

export type PageUser = NonNullable<Session["user"]>;
export type PageLab = PageUser["labs"][number];

/** The signed-in user for a page (with labs and roles); redirects to sign-in otherwise. */
export async function requirePageUser(callbackUrl?: string): Promise<PageUser> {
  const session = await getServerSession(authOptions);
  if (!session?.user?.id) redirect(`/signin${callbackUrl ? `?callbackUrl=${encodeURIComponent(callbackUrl)}` : ""}`);
  return session.user;
}

/**
 * The signed-in user and their membership of lab `labId`; the not-found page when they are not a
 * member. Every page under /labs/[labId] asks for itself: Next renders a page alongside its
 * layout, so the layout's own not-found does not stop the page from running (and failing).
 */
export async function requirePageLab(labId: string, callbackUrl: string): Promise<{ user: PageUser; lab: PageLab }> {
  const user = await requirePageUser(callbackUrl);
  const lab = user.labs.find((l) => l.id === labId);
  if (!lab) notFound();
  return { user, lab };
}
