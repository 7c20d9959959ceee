import { db } from "@/db/client";
import { env } from "@/lib/env";
import type { Role } from "@/lib/schemas/auth";
import type { RunNotifyScope } from "@/lib/schemas/invitations";

export type SubjectKind = "run" | "comparison";

export interface NotificationSetting { labId: string; labName: string; role: Role; runs: RunNotifyScope }

/** The user's run e-mail choice in each of their labs ("off" where never set). */
export async function listNotificationSettings(userId: string): Promise<NotificationSetting[]> {
  const rows = await db("memberships as m").join("labs as l", "l.id", "m.labId")
    .leftJoin("notification_settings as s", function join() { this.on("s.labId", "m.labId").andOn("s.userId", "m.userId"); })
    .where("m.userId", userId).orderBy("m.createdAt", "asc")
    .select("l.id as labId", "l.name as labName", "m.role", db.raw("coalesce(s.runs, 'off') as runs"));
  return rows.map((r: NotificationSetting) => ({ ...r, labId: String(r.labId) }));
}

/** Sets the user's run e-mail choice for one lab (the caller checked membership). */
export async function setNotificationSetting(userId: string, labId: string, runs: RunNotifyScope): Promise<void> {
  await db("notification_settings").insert({ userId, labId, runs })
    .onConflict(["userId", "labId"]).merge({ runs, updatedAt: db.fn.now() });
}

export interface Recipient { userId: string; email: string; name: string }

/**
 * Who wants an e-mail about a finished subject in `labId`: current members who chose
 * "every run in this lab", and its owner (`ownerId`, who launched it) when they chose "my runs".
 */
export async function listRecipients(labId: string, ownerId: string | null): Promise<Recipient[]> {
  const rows = await db("notification_settings as s").join("memberships as m", function join() { this.on("m.labId", "s.labId").andOn("m.userId", "s.userId"); })
    .join("users as u", "u.id", "s.userId")
    .where("s.labId", labId)
    .where((q) => {
      q.where("s.runs", "lab");
      if (ownerId) q.orWhere((w) => w.where("s.runs", "mine").andWhere("s.userId", ownerId));
    })
    .orderBy("u.id").select("u.id as userId", "u.email", "u.name");
  return rows.map((r: Recipient) => ({ ...r, userId: String(r.userId) }));
}

/**
 * Claims the one e-mail a recipient gets about a subject: the claim's id for the first caller, null for
 * every later one (a retried or duplicated hook) while that claim is live. A claim left unsettled
 * for `staleAfterS` seconds (its sender died between claiming and recording the outcome) can be
 * claimed again, so the e-mail is not lost; the price is a second copy when the sender died after
 * the server took the message, which carries the same Message-ID (lib/mail.ts finishedMail).
 */
export async function claimNotification(kind: SubjectKind, subjectId: string, labId: string, r: Recipient, staleAfterS = env.NOTIFY_STALE_CLAIM_S): Promise<Claim | null> {
  const res = await db.raw(
    `insert into notifications (subject_kind, subject_id, lab_id, user_id, email) values (?, ?, ?, ?, ?)
     on conflict (subject_kind, subject_id, user_id) do update set claimed_at = clock_timestamp(), email = excluded.email
       where notifications.status = 'claimed' and notifications.claimed_at < now() - make_interval(secs => ?)
     returning id, claimed_at::text as claimed_at`,
    [kind, subjectId, labId, r.userId, r.email, staleAfterS],
  );
  const row = (res as { rows: { id: string | number; claimed_at: string }[] }).rows[0];
  return row ? { id: String(row.id), claimedAt: row.claimed_at } : null;
}

/** A claimed e-mail: its row and the instant of this claim (a later re-claim has another). */
export interface Claim { id: string; claimedAt: string }

/**
 * Gives up claims left stale by a dead sender for people no longer among the recipients (they
 * opted out or left the lab meanwhile), so the subject can count as notified.
 */
export async function abandonStaleClaims(kind: SubjectKind, subjectId: string, recipientIds: string[], staleAfterS = env.NOTIFY_STALE_CLAIM_S): Promise<void> {
  await db("notifications").where({ subjectKind: kind, subjectId, status: "claimed" }).whereNotIn("userId", recipientIds)
    .whereRaw("claimed_at < now() - make_interval(secs => ?)", [staleAfterS])
    .update({ status: "failed", error: "no longer a recipient when the claim of a stopped sender was taken over" });
}

/** Whether no e-mail about a subject is still claimed without an outcome (in a sender's hands, or lost with it). */
export async function notificationsSettled(kind: SubjectKind, subjectId: string): Promise<boolean> {
  return !(await db("notifications").where({ subjectKind: kind, subjectId, status: "claimed" }).first("id"));
}

/** Records a claim's outcome, unless the claim was taken over meanwhile (the new holder records its own). */
export async function markNotification(claim: Claim, result: { status: "sent"; messageId: string } | { status: "failed"; error: string }): Promise<void> {
  await db("notifications").where({ id: claim.id, status: "claimed" }).whereRaw("claimed_at = ?::timestamptz", [claim.claimedAt]).update(result.status === "sent"
    ? { status: "sent", messageId: result.messageId, sentAt: db.fn.now() }
    : { status: "failed", error: result.error.slice(0, 2000) });
}

/** Notes that every recipient of a subject has been handled (the sweep skips it then). */
export async function markSubjectNotified(kind: SubjectKind, subjectId: string): Promise<void> {
  await db("notified_subjects").insert({ subjectKind: kind, subjectId }).onConflict(["subjectKind", "subjectId"]).ignore();
}

/**
 * Runs that succeeded or failed between `maxAgeS` and `minAgeS` seconds ago whose
 * notifications were never completed (the worker died between finishing and notifying).
 */
export async function listUnnotifiedRuns(minAgeS: number, maxAgeS: number, limit = 50): Promise<string[]> {
  const rows = await db("runs as r").whereIn("r.status", ["succeeded", "failed"])
    .whereRaw("r.finished_at between now() - make_interval(secs => ?) and now() - make_interval(secs => ?)", [maxAgeS, minAgeS])
    .whereNotExists(db("notified_subjects as n").where("n.subjectKind", "run").whereRaw("n.subject_id = r.id"))
    .orderBy("r.finishedAt").limit(limit).select("r.id");
  return rows.map((r: { id: string }) => String(r.id));
}

export interface FakeMessage { id: string; mailFrom: string | null; rcptTo: string[]; subject: string | null; textBody: string | null; receivedAt: Date }

/**
 * The local mail fake's messages addressed to `email` (any case), newest first: a user's own
 * inbox, never anyone else's mail (invitation links are credentials).
 */
export async function listFakeMailFor(email: string, limit = 100): Promise<FakeMessage[]> {
  const rows = await db("mail_fake_messages").whereRaw("exists (select 1 from unnest(rcpt_to) as r(address) where lower(r.address) = lower(?))", [email])
    .orderBy("id", "desc").limit(limit).select("id", "mailFrom", "rcptTo", "subject", "textBody", "receivedAt");
  return rows.map((r: FakeMessage) => ({ ...r, id: String(r.id), receivedAt: new Date(r.receivedAt) }));
}

/** Keeps one message the local mail fake received (scripts/mail-fake.ts); it delivers nothing. */
export async function storeFakeMail(m: { mailFrom: string | null; rcptTo: string[]; subject: string | null; textBody: string | null; raw: string }): Promise<void> {
  await db("mail_fake_messages").insert(m);
}
