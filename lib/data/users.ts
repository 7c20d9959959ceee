import { db } from "@/db/client";
import { hashPassword } from "@/lib/auth/password";
import { conflict } from "@/lib/http";
import type { Role, SignUpInput } from "@/lib/schemas/auth";

export interface UserRow { id: string; email: string; name: string; passwordHash: string; isDemo: boolean }
export interface LabMembership { id: string; name: string; role: Role; isDemo: boolean }

/** The user with this e-mail (case-insensitive), or null. */
export async function getUserByEmail(email: string): Promise<UserRow | null> {
  return (await db<UserRow>("users").where({ email }).first()) ?? null;
}

export async function getUserById(id: string): Promise<UserRow | null> {
  return (await db<UserRow>("users").where({ id }).first()) ?? null;
}

/**
 * Creates a user and the user's own lab with the user as owner, in one transaction.
 * @throws HttpError 409 when the e-mail is taken.
 */
export async function createUserWithLab(input: SignUpInput): Promise<{ userId: string; labId: string }> {
  const passwordHash = await hashPassword(input.password);
  try {
    return await db.transaction(async (trx) => {
      const [user] = await trx("users").insert({ email: input.email, name: input.name, passwordHash }).returning(["id"]);
      const [lab] = await trx("labs").insert({ name: input.labName ?? `${input.name}'s lab`, createdBy: user.id }).returning(["id"]);
      await trx("memberships").insert({ labId: lab.id, userId: user.id, role: "owner" });
      return { userId: String(user.id), labId: String(lab.id) };
    });
  } catch (e) {
    if ((e as { code?: string }).code === "23505") throw conflict("email: an account with this e-mail already exists");
    throw e;
  }
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
