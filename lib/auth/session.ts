import { getServerSession } from "next-auth";

import { authOptions } from "@/lib/auth/options";
import { getUserByApiToken } from "@/lib/data/tokens";
import { unauthenticated } from "@/lib/http";

export interface CurrentUser { id: string; email: string; name: string; via: "session" | "token" }

/**
 * The caller of a route handler: a personal API token (`Authorization: Bearer`) or the
 * browser session; null when neither is valid.
 */
export async function getCurrentUser(req?: Request): Promise<CurrentUser | null> {
  const header = req?.headers.get("authorization");
  if (header) {
    const m = /^Bearer\s+(\S+)$/i.exec(header);
    const user = m ? await getUserByApiToken(m[1]!) : null;
    return user ? { ...user, via: "token" } : null;
  }
  const session = await getServerSession(authOptions);
  const u = session?.user;
  if (!u?.id) return null;
  return { id: u.id, email: u.email ?? "", name: u.name ?? "", via: "session" };
}

/** @throws HttpError 401 when nobody is signed in. */
export async function requireUser(req?: Request): Promise<CurrentUser> {
  const user = await getCurrentUser(req);
  if (!user) throw unauthenticated();
  return user;
}
