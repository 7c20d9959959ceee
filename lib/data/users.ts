import { db } from "@/db/client";
import { hashPassword } from "@/lib/auth/password";
import type { Role, SignUpInput } from "@/lib/schemas/auth";

export interface UserRow { id: string; email: string; name: string; passwordHash: string; isDemo: boolean; sessionVersion: number }
export interface LabMembership { id: string; name: string; role: Role; isDemo: boolean }

/** The user with this e-mail (case-insensitive), or null. */
export async function getUserByEmail(email: string): Promise<UserRow | null> {
  return (await db<UserRow>("users").where({ email }).first()) ?? null;
}

export async function getUserById(id: string): Promise<UserRow | null> {
  return (await db<UserRow>("users").where({ id }).first()) ?? null;
}

/**
 * Creates a user and the user's own lab with the user as owner, in one transaction; when the
 * e-mail is taken, nothing is written and `created` is false (the password is hashed either
 * way, so both take as long).
 */
export async function createUserWithLab(input: SignUpInput): Promise<{ created: true; userId: string; labId: string } | { created: false }> {
  const passwordHash = await hashPassword(input.password);
  try {
    return await db.transaction(async (trx) => {
      const [user] = await trx("users").insert({ email: input.email, name: input.name, passwordHash }).returning(["id"]);
      const [lab] = await trx("labs").insert({ name: input.labName ?? `${input.name}'s lab`, createdBy: user.id }).returning(["id"]);
      await trx("memberships").insert({ labId: lab.id, userId: user.id, role: "owner" });
      return { created: true as const, userId: String(user.id), labId: String(lab.id) };
    });
  } catch (e) {
    if ((e as { code?: string }).code === "23505") return { created: false };
    throw e;
  }
}

/** The user's current session version, or null when the user is gone. */
export async function getSessionVersion(userId: string): Promise<number | null> {
  if (!/^[1-9][0-9]{0,15}$/.test(userId)) return null;
  const row = await db("users").where({ id: userId }).first("sessionVersion");
  return row ? Number(row.sessionVersion) : null;
}

/** Ends every session of the user: tokens issued under the old version are refused from now on. */
export async function bumpSessionVersion(userId: string): Promise<void> {
  if (!/^[1-9][0-9]{0,15}$/.test(userId)) return;
  await db("users").where({ id: userId }).increment("sessionVersion", 1);
}

/**
 * Replaces the user's password hash and bumps the session version in one statement, so no
 * session from before the change outlives it. Only when the stored hash is still `expectedHash`
 * (the one the current password was checked against): of two changes at once, one wins.
 * @returns the new session version, or null when the hash had changed meanwhile (or the user is gone).
 */
export async function replacePasswordHash(userId: string, expectedHash: string, newHash: string): Promise<number | null> {
  const [row] = await db("users").where({ id: userId, passwordHash: expectedHash })
    .update({ passwordHash: newHash, sessionVersion: db.raw("session_version + 1") })
    .returning(["sessionVersion"]);
  return row ? Number(row.sessionVersion) : null;
}

/** The labs the user belongs to, with the user's role in each, oldest membership first. */
export async function listLabsForUser(userId: string): Promise<LabMembership[]> {
  const rows = await db("memberships as m")
    .join("labs as l", "l.id", "m.labId")
    .where("m.userId", userId)
    .orderBy("m.createdAt", "asc")
    .select("l.id", "l.name", "m.role", "l.isDemo");
  return rows.map((r: LabMembership) => ({ id: String(r.id), name: r.name, role: r.role, isDemo: r.isDemo }));
}
