// Finished-work e-mails. Generic over what finished (a run now, a comparison later): a subject
// has a kind, an id, a lab, the member who started it, a status and a link.
import { recordAudit } from "../lib/data/audit";
import { getLab } from "../lib/data/labs";
import {
  abandonStaleClaims, claimNotification, listRecipients, listUnnotifiedRuns, markNotification, markSubjectNotified, notificationsSettled, type SubjectKind,
} from "../lib/data/notifications";
import { getRun, type RunRow } from "../lib/data/runs";
import { env } from "../lib/env";
import { appUrl, finishedMail, sendMail } from "../lib/mail";

export interface FinishedSubject {
  kind: SubjectKind; id: string; labId: string;
  /** Who started it: recipients who chose "my runs" get mail only for their own. */
  ownerId: string | null;
  status: "succeeded" | "failed" | "cancelled"; error?: string | null;
  /** Title after the kind, e.g. `#12 (Ring timer v3, ssa)` for "run #12 (…)". */
  title: string;
  /** Path inside the app, e.g. /labs/1/runs/12. */
  path: string;
}

/** Statuses worth an e-mail: a cancel was asked for by a person, who knows already. */
const NOTIFIED_STATUSES = new Set(["succeeded", "failed"]);

/**
 * Sends each opted-in recipient one e-mail about a finished subject. Each recipient's row is
 * claimed before sending, so a retried hook, a second worker or the sweep sends nothing twice
 * while the claim is live; the subject counts as notified only when every claim has an outcome,
 * so the sweep comes back for a claim whose sender died and, once it is stale, sends it
 * (lib/data/notifications.ts claimNotification). Returns how many e-mails this call sent.
 */
export async function notifyFinished(s: FinishedSubject): Promise<number> {
  if (!NOTIFIED_STATUSES.has(s.status)) {
    await markSubjectNotified(s.kind, s.id);
    return 0;
  }
  const [recipients, lab] = await Promise.all([listRecipients(s.labId, s.ownerId), getLab(s.labId)]);
  let sent = 0;
  for (const r of recipients) {
    const claim = await claimNotification(s.kind, s.id, s.labId, r);
    if (!claim) continue;
    const result = await sendMail(finishedMail({
      to: r.email, kind: s.kind, title: s.title, status: s.status, error: s.error, link: `${appUrl()}${s.path}`, labName: lab?.name ?? "your lab",
      key: `${s.kind}-${s.id}.user-${r.userId}`,
    }));
    if (result.status === "sent") {
      sent += 1;
      await markNotification(claim, result);
    } else {
      await markNotification(claim, { status: "failed", error: result.status === "failed" ? result.error : "mail: SMTP_URL is not set" });
    }
  }
  await abandonStaleClaims(s.kind, s.id, recipients.map((r) => r.userId));
  if (await notificationsSettled(s.kind, s.id)) await markSubjectNotified(s.kind, s.id);
  return sent;
}

/** A run as a notification subject. */
export function runSubject(run: RunRow): FinishedSubject {
  return {
    kind: "run", id: run.id, labId: run.labId, ownerId: run.createdBy == null ? null : String(run.createdBy),
    status: run.status as FinishedSubject["status"], error: run.error,
    title: `#${run.id} (${run.circuitName} v${run.versionNumber}, ${run.method})`, path: `/labs/${run.labId}/runs/${run.id}`,
  };
}

/**
 * Everything that follows a run's end, once: the `run.finished` audit event (deduplicated
 * by key) and the e-mails. Safe to call again for the same run.
 */
export async function afterRunFinished(runId: string): Promise<void> {
  const run = await getRun(runId);
  if (!run || !["succeeded", "failed", "cancelled"].includes(run.status)) return;
  await recordAudit({
    labId: run.labId, actor: null, action: "run.finished", target: { type: "run", id: run.id },
    details: { status: run.status, circuit: run.circuitName, version_number: run.versionNumber, ...(run.error ? { error: run.error } : {}) },
    dedupeKey: `run.finished:${run.id}`,
  });
  await notifyFinished(runSubject(run));
}

/**
 * Catches up on runs that finished while no notifier ran to the end (a worker killed right
 * after storing a result): every `NOTIFY_SWEEP_S` seconds, runs finished 10 s to 1 h ago
 * without a completed notification get one. Returns a function that stops the sweep.
 */
export function startNotifySweep(intervalS = env.NOTIFY_SWEEP_S): () => void {
  let busy = false;
  const timer = setInterval(async () => {
    if (busy) return;
    busy = true;
    try {
      for (const id of await listUnnotifiedRuns(10, 3600)) await afterRunFinished(id);
    } catch (e) {
      console.error("[notify] sweep failed:", e);
    } finally {
      busy = false;
    }
  }, intervalS * 1000);
  timer.unref();
  return () => clearInterval(timer);
}
