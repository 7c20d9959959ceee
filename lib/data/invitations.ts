import { createHash, randomBytes } from "node:crypto";

import type { Knex } from "knex";

import { db } from "@/db/client";
import { hashPassword } from "@/lib/auth/password";
import { recordAudit } from "@/lib/data/audit";
import { env } from "@/lib/env";
import { conflict, forbidden, HttpError, notFound, unprocessable } from "@/lib/http";
import { appUrl, invitationMail, sendMail, type MailResult } from "@/lib/mail";
import type { Role } from "@/lib/schemas/auth";
import type { InvitationAccept, InvitationCreate } from "@/lib/schemas/invitations";

export interface InvitationRow {
  id: string; labId: string; email: string; role: Role; invitedByEmail: string | null; createdAt: Date; expiresAt: Date;
  acceptedAt: Date | null; revokedAt: Date | null;
}
export type InvitationState = "open" | "expired" | "accepted" | "revoked";
export interface Actor { id: string; email: string; name?: string }

/** sha256 (hex) of an invitation token: all the database keeps of it. */
export const hashInvitationToken = (token: string): string => createHash("sha256").update(token).digest("hex");

/** The link an invitee follows; the token is its last segment. */
export const invitationLink = (token: string): string => `${appUrl()}/invite/${token}`;

export const invitationState = (r: Pick<InvitationRow, "acceptedAt" | "revokedAt" | "expiresAt">, now = new Date()): InvitationState =>
  r.acceptedAt ? "accepted" : r.revokedAt ? "revoked" : new Date(r.expiresAt) <= now ? "expired" : "open";

const gone = (msg: string) => new HttpError(410, msg);

const COLUMNS = ["i.id", "i.labId", "i.email", "i.role", "u.email as invitedByEmail", "i.createdAt", "i.expiresAt", "i.acceptedAt", "i.revokedAt"];
const toRow = (r: InvitationRow): InvitationRow => ({ ...r, id: String(r.id), labId: String(r.labId) });

/**
 * Invites `email` into the lab with `role`: replaces any open invitation for the address,
 * stores only the token's hash, records `invitation.sent`, then e-mails the link.
 * Returns the link too, so an owner can pass it on when no e-mail could be sent.
 * @throws 409 when the address already belongs to a member.
 */
export async function sendInvitation(labId: string, inviter: Actor, input: InvitationCreate): Promise<{ invitation: InvitationRow; link: string; mail: MailResult }> {
  const token = randomBytes(32).toString("base64url");
  const expiresAt = new Date(Date.now() + env.INVITATION_TTL_H * 3600_000);
  const id = await db.transaction(async (trx) => {
    const member = await trx("memberships as m").join("users as u", "u.id", "m.userId").where("m.labId", labId).where("u.email", input.email).first("m.role");
    if (member) throw conflict(`email: ${input.email} is already a member of this lab (${member.role})`);
    const replaced = await trx("invitations").where({ labId, email: input.email }).whereNull("acceptedAt").whereNull("revokedAt")
      .update({ revokedAt: trx.fn.now(), revokedBy: inviter.id }).returning(["id", "role"]);
    for (const r of replaced) {
      await recordAudit({ labId, actor: inviter, action: "invitation.revoked", target: { type: "invitation", id: String(r.id) }, details: { email: input.email, role: r.role, reason: "replaced by a new invitation" } }, trx);
    }
    const [row] = await trx("invitations").insert({
      labId, email: input.email, role: input.role, tokenHash: hashInvitationToken(token), invitedBy: inviter.id, expiresAt,
    }).returning(["id"]);
    await recordAudit({ labId, actor: inviter, action: "invitation.sent", target: { type: "invitation", id: String(row.id) }, details: { email: input.email, role: input.role } }, trx);
    return String(row.id);
  });
  const invitation = (await getInvitation(labId, id))!;
  const lab = await db("labs").where({ id: labId }).first("name");
  const link = invitationLink(token);
  const mail = await sendMail(invitationMail({ to: input.email, labName: lab?.name ?? "a lab", role: input.role, invitedBy: inviter.name ? `${inviter.name} (${inviter.email})` : inviter.email, link, expiresAt }));
  return { invitation, link, mail };
}

export async function getInvitation(labId: string, id: string): Promise<InvitationRow | null> {
  const row = await db("invitations as i").leftJoin("users as u", "u.id", "i.invitedBy").where({ "i.labId": labId, "i.id": id }).first(COLUMNS);
  return row ? toRow(row) : null;
}

/** The lab's invitations that were neither accepted nor revoked (expired ones included), newest first. */
export async function listOpenInvitations(labId: string): Promise<InvitationRow[]> {
  const rows = await db("invitations as i").leftJoin("users as u", "u.id", "i.invitedBy")
    .where("i.labId", labId).whereNull("i.acceptedAt").whereNull("i.revokedAt")
    .orderBy("i.createdAt", "desc").select(COLUMNS);
  return rows.map(toRow);
}

/**
 * Withdraws an open invitation (its link stops working) and records `invitation.revoked`.
 * @throws 404 when the lab has no such open invitation.
 */
export async function revokeInvitation(labId: string, id: string, actor: Actor): Promise<void> {
  await db.transaction(async (trx) => {
    const [row] = await trx("invitations").where({ labId, id }).whereNull("acceptedAt").whereNull("revokedAt")
      .update({ revokedAt: trx.fn.now(), revokedBy: actor.id }).returning(["id", "email", "role"]);
    if (!row) throw notFound("invitation");
    await recordAudit({ labId, actor, action: "invitation.revoked", target: { type: "invitation", id }, details: { email: row.email, role: row.role } }, trx);
  });
}

export interface InvitationView {
  state: InvitationState; labId: string; labName: string; email: string; role: Role; invitedBy: string | null; expiresAt: Date; hasAccount: boolean;
}

/** What the invite page shows for a token, or null when no invitation has it. */
export async function getInvitationByToken(token: string): Promise<InvitationView | null> {
  const row = await db("invitations as i").join("labs as l", "l.id", "i.labId").leftJoin("users as u", "u.id", "i.invitedBy")
    .where("i.tokenHash", hashInvitationToken(token))
    .first("i.labId", "l.name as labName", "i.email", "i.role", "u.email as invitedBy", "i.expiresAt", "i.acceptedAt", "i.revokedAt");
  if (!row) return null;
  const account = await db("users").where({ email: row.email }).first("id");
  return {
    state: invitationState(row), labId: String(row.labId), labName: row.labName, email: row.email, role: row.role,
    invitedBy: row.invitedBy, expiresAt: row.expiresAt, hasAccount: Boolean(account),
  };
}

/** The refusal for a token that cannot be used (any more), naming why. */
function refusal(state: InvitationState, expiresAt: Date): HttpError {
  if (state === "accepted") return gone("token: this invitation has already been used; ask the lab's owner for a new one");
  if (state === "revoked") return gone("token: this invitation was withdrawn by the lab's owner");
  return gone(`token: this invitation expired on ${new Date(expiresAt).toISOString().slice(0, 16).replace("T", " ")} UTC; ask the lab's owner for a new one`);
}

async function lockOpen(trx: Knex.Transaction, token: string) {
  const row = await trx("invitations").where({ tokenHash: hashInvitationToken(token) }).forUpdate()
    .first("id", "labId", "email", "role", "expiresAt", "acceptedAt", "revokedAt");
  if (!row) throw notFound("token");
  const state = invitationState(row);
  if (state !== "open") throw refusal(state, row.expiresAt);
  return row as { id: string; labId: string; email: string; role: Role };
}

/**
 * Accepts an invitation once: the signed-in `user` (whose e-mail must be the invited one)
 * joins the lab, or, with nobody signed in, a new account is made for the invited e-mail
 * from `input` (name, password). Records `invitation.accepted`.
 * @throws 404 unknown token; 410 used, withdrawn or expired; 403 another account is signed in;
 *   409 the invited e-mail has an account (sign in first); 422 name/password missing.
 */
export async function acceptInvitation(token: string, user: Actor | null, input: InvitationAccept): Promise<{ labId: string; userId: string; role: Role; accountCreated: boolean; alreadyMember: boolean }> {
  let passwordHash: string | null = null;
  if (!user) {
    // Check the token first (a dead link says so, whatever the form holds), before spending
    // ~250 ms on bcrypt, and again under the lock below.
    await db.transaction((trx) => lockOpen(trx, token));
    if (!input.name) throw unprocessable("name: is required to create your account");
    if (!input.password) throw unprocessable("password: is required to create your account");
    passwordHash = await hashPassword(input.password);
  }
  return db.transaction(async (trx) => {
    const inv = await lockOpen(trx, token);
    let userId: string;
    let email: string;
    if (user) {
      if (user.email.toLowerCase() !== String(inv.email).toLowerCase()) {
        throw forbidden(`email: this invitation is for ${inv.email}; you are signed in as ${user.email}. Sign out, then open the link again`);
      }
      userId = user.id;
      email = user.email;
    } else {
      if (await trx("users").where({ email: inv.email }).first("id")) {
        throw conflict(`email: an account with ${inv.email} already exists; sign in with it, then open the link again`);
      }
      const [u] = await trx("users").insert({ email: inv.email, name: input.name, passwordHash }).returning(["id", "email"]);
      userId = String(u.id);
      email = u.email;
    }
    const inserted = await trx("memberships").insert({ labId: inv.labId, userId, role: inv.role }).onConflict(["labId", "userId"]).ignore().returning(["id"]);
    await trx("invitations").where({ id: inv.id }).update({ acceptedAt: trx.fn.now(), acceptedBy: userId });
    await recordAudit({
      labId: String(inv.labId), actor: { id: userId, email }, action: "invitation.accepted", target: { type: "invitation", id: String(inv.id) },
      details: { email: inv.email, role: inv.role, ...(user ? {} : { account_created: true }), ...(inserted.length ? {} : { already_member: true }) },
    }, trx);
    return { labId: String(inv.labId), userId, role: inv.role, accountCreated: !user, alreadyMember: inserted.length === 0 };
  });
}
