import type { Knex } from "knex";

import { db } from "@/db/client";
import type { AuditAction, AuditEventJson, AuditQuery } from "@/lib/view/audit";

export interface AuditEventInput {
  labId: string;
  /** The signed-in user who acted; null for the background worker. */
  actor: { id: string; email: string } | null;
  action: AuditAction;
  target: { type: string; id?: string | null };
  details?: Record<string, unknown>;
  /** Events a retry could repeat (run.finished) carry a key; a second insert is ignored. */
  dedupeKey?: string;
}

/**
 * Appends one event to the lab's audit trail (inside `q` when given, so it commits with the
 * change it records). Returns false when an event with the same dedupe key already exists.
 */
export async function recordAudit(e: AuditEventInput, q: Knex | Knex.Transaction = db): Promise<boolean> {
  const insert = q("audit_events").insert({
    labId: e.labId, actorId: e.actor?.id ?? null, actorEmail: e.actor?.email ?? null, action: e.action,
    targetType: e.target.type, targetId: e.target.id ?? null, details: JSON.stringify(e.details ?? {}), dedupeKey: e.dedupeKey ?? null,
  });
  const rows = e.dedupeKey ? await insert.onConflict("dedupeKey").ignore().returning(["id"]) : await insert.returning(["id"]);
  return rows.length > 0;
}

/** What a change records once it knows its result (inside its transaction); null records nothing. */
export type AuditFor<R> = (
  result: R,
  trx: Knex.Transaction,
) => AuditEventInput | AuditEventInput[] | null | Promise<AuditEventInput | AuditEventInput[] | null>;

/**
 * Runs `change` and records the events `audit` derives from its result in one transaction, so
 * the trail never misses a change nor names one that was rolled back.
 */
export async function audited<R>(change: (trx: Knex.Transaction) => Promise<R>, audit?: AuditFor<R>): Promise<R> {
  return db.transaction(async (trx) => {
    const result = await change(trx);
    const events = audit ? await audit(result, trx) : null;
    for (const e of events === null ? [] : Array.isArray(events) ? events : [events]) await recordAudit(e, trx);
    return result;
  });
}

/** The lab's audit trail, newest first, filtered as GET /api/labs/:id/audit describes. */
export async function listAuditEvents(labId: string, f: AuditQuery): Promise<{ events: AuditEventJson[]; total: number }> {
  const base = db("audit_events").where({ labId });
  if (f.action) {
    if (f.action.includes(".")) base.where("action", f.action);
    else base.whereLike("action", `${f.action}.%`);
  }
  if (f.actor === "worker") base.whereNull("actorId");
  else if (f.actor) base.whereRaw("lower(actor_email) = ?", [f.actor]);
  if (f.from) base.where("createdAt", ">=", f.from);
  if (f.to) base.where("createdAt", "<=", f.to);
  const [rows, total] = await Promise.all([
    base.clone().orderBy("createdAt", "desc").orderBy("id", "desc").limit(f.limit).offset(f.offset)
      .select("id", "action", "actorEmail", "targetType", "targetId", "details", "createdAt"),
    base.clone().count<{ count: string }[]>("* as count"),
  ]);
  return {
    events: rows.map((r: { id: string; action: AuditAction; actorEmail: string | null; targetType: string; targetId: string | null; details: Record<string, unknown>; createdAt: Date }) => ({
      id: String(r.id), action: r.action, actor: r.actorEmail, target_type: r.targetType, target_id: r.targetId,
      details: r.details, created_at: new Date(r.createdAt).toISOString(),
    })),
    total: Number(total[0]?.count ?? 0),
  };
}

/** Everyone who appears in the lab's trail (for the actor filter), with "worker" when it acted. */
export async function listAuditActors(labId: string): Promise<string[]> {
  const rows = await db("audit_events").where({ labId }).distinct("actorEmail").orderBy("actorEmail");
  return rows.map((r: { actorEmail: string | null }) => r.actorEmail ?? "worker");
}

/** The id of the lab's newest event ("0" when none): changes whenever something is recorded. */
export async function latestAuditEventId(labId: string): Promise<string> {
  const row = await db("audit_events").where({ labId }).max<{ max: string | null }[]>("id as max");
  return String(row[0]?.max ?? 0);
}
