import { db } from "@/db/client";
import { audited, type AuditFor } from "@/lib/data/audit";
import { conflict, notFound } from "@/lib/http";
import type { Role } from "@/lib/schemas/auth";

export interface LabMember { userId: string; email: string; name: string; role: Role; joinedAt: Date }

/** The user's role in the lab, or null when the user is not a member (lib/access.ts decides what it allows). */
export async function getMemberRole(userId: string, labId: string | number): Promise<Role | null> {
  const row = await db("memberships").where({ userId, labId }).first("role");
  return (row?.role as Role | undefined) ?? null;
}

export async function getLab(labId: string): Promise<{ id: string; name: string; isDemo: boolean; createdAt: Date } | null> {
  return (await db("labs").where({ id: labId }).first("id", "name", "isDemo", "createdAt")) ?? null;
}

/** Renames the lab; `audit` sees the name it had before (null when there is no such lab). */
export async function renameLab(labId: string, name: string, audit?: AuditFor<{ from: string } | null>): Promise<void> {
  await audited(async (trx) => {
    const before = await trx("labs").where({ id: labId }).forUpdate().first("name");
    if (!before) return null;
    await trx("labs").where({ id: labId }).update({ name, updatedAt: trx.fn.now() });
    return { from: before.name as string };
  }, audit);
}

export async function listMembers(labId: string): Promise<LabMember[]> {
  const rows = await db("memberships as m").join("users as u", "u.id", "m.userId").where("m.labId", labId)
    .orderByRaw("case m.role when 'owner' then 0 when 'modeler' then 1 else 2 end").orderBy("u.email")
    .select("u.id as userId", "u.email", "u.name", "m.role", "m.createdAt as joinedAt");
  return rows.map((r: LabMember) => ({ ...r, userId: String(r.userId) }));
}

/**
 * Adds an existing user to the lab.
 * @throws 404 when no account has the e-mail, 409 when the user is already a member.
 */
export async function addMember(labId: string, email: string, role: Role, audit?: AuditFor<LabMember>): Promise<LabMember> {
  const user = await db("users").where({ email }).first("id", "email", "name");
  if (!user) throw notFound("email");
  try {
    return await audited(async (trx) => {
      const [m] = await trx("memberships").insert({ labId, userId: user.id, role }).returning(["createdAt"]);
      return { userId: String(user.id), email: user.email, name: user.name, role, joinedAt: m.createdAt };
    }, audit);
  } catch (e) {
    if ((e as { code?: string }).code === "23505") throw conflict("email: already a member of this lab");
    throw e;
  }
}

/**
 * Changes a member's role, or removes the member (role null); a lab always keeps an owner.
 * `audit` sees the member's e-mail and the role they had.
 */
export async function setMemberRole(labId: string, userId: string, role: Role | null, audit?: AuditFor<{ email: string; from: Role }>): Promise<void> {
  await audited(async (trx) => {
    // Lock the lab's memberships so two owners cannot demote each other at once.
    const members = await trx("memberships").where({ labId }).forUpdate().select("userId", "role");
    const target = members.find((m: { userId: string }) => String(m.userId) === userId);
    if (!target) throw notFound("member");
    const owners = members.filter((m: { role: Role }) => m.role === "owner").length;
    if (target.role === "owner" && role !== "owner" && owners <= 1) {
      throw conflict("role: the lab's last owner cannot be demoted or removed; make someone else owner first");
    }
    const q = trx("memberships").where({ labId, userId });
    if (role) await q.update({ role, updatedAt: trx.fn.now() });
    else await q.delete();
    const { email } = await trx("users").where({ id: userId }).first("email");
    return { email: email as string, from: target.role as Role };
  }, audit);
}
