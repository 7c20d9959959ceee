import { getMemberRole } from "@/lib/data/labs";
import { forbidden, notFound } from "@/lib/http";
import type { Role } from "@/lib/schemas/auth";

/**
 * Everything a member may do in a lab, and which roles may do it. Every route asks
 * `requireLabRole` (or `may`) with one of these; nothing checks roles any other way.
 */
export const ACTIONS = {
  "lab:read": ["owner", "modeler", "reviewer"],
  "lab:manage": ["owner"],
  "circuit:write": ["owner", "modeler"],
  "run:launch": ["owner", "modeler"],
  "run:cancel": ["owner", "modeler"],
  "comparison:write": ["owner", "modeler"],
  "data:write": ["owner", "modeler"],
  "delete": ["owner"],
  "audit:read": ["owner"],
} as const satisfies Record<string, readonly Role[]>;
export type Action = keyof typeof ACTIONS;

/** Whether a member with `role` may do `action` (pure; also used by pages to hide controls). */
export function may(role: Role | null | undefined, action: Action): boolean {
  return role != null && (ACTIONS[action] as readonly Role[]).includes(role);
}

/** The user's role in the lab, or null when the user is not a member. */
export async function getLabRole(userId: string, labId: string | number): Promise<Role | null> {
  return getMemberRole(userId, labId);
}

/**
 * The user's role in the lab when it allows `action`. `what` names the thing asked for
 * (a circuit, a run…) in the 404, so nothing reveals that it exists in another lab.
 * @throws HttpError 404 when the user is not a member, 403 when the role may not do the action.
 */
export async function requireLabRole(userId: string, labId: string | number, action: Action, what = "lab"): Promise<Role> {
  const role = await getLabRole(userId, labId);
  if (!role) throw notFound(what);
  if (!may(role, action)) throw forbidden(`role: a ${role} may not do ${action} in this lab`);
  return role;
}
