import { requireLabRole, type Action } from "@/lib/access";
import { getVersion, type VersionRow } from "@/lib/data/circuits";
import { idParam, notFound } from "@/lib/http";

/**
 * The version named by a URL segment, when the user may do `action` in its lab.
 * @throws 404 for a bad id, a missing version or one in another lab; 403 for the role.
 */
export async function requireVersion(userId: string, rawId: string | undefined, action: Action = "lab:read"): Promise<VersionRow> {
  const version = await getVersion(idParam(rawId, "version"));
  if (!version) throw notFound("version");
  await requireLabRole(userId, version.labId, action, "version");
  return version;
}
