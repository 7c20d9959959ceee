import { getSessionVersion } from "@/lib/data/users";

/**
 * Whether a session token still counts: it names a user whose session version is still the one
 * it was issued under (sign-out bumps the version, ending every copy of the token).
 */
export async function isSessionCurrent(uid: string | undefined, sv: number | undefined): Promise<boolean> {
  if (!uid || typeof sv !== "number") return false;
  return (await getSessionVersion(uid)) === sv;
}
