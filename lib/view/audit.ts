import { z } from "zod";

import { IdField } from "@/lib/schemas/api";

/**
 * Every action the audit trail records, with how the Lab page words it. Routes and the
 * worker record these (lib/data/audit.ts `recordAudit`); nothing else writes the trail.
 */
export const AUDIT_ACTIONS = {
  "circuit.created": "created circuit",
  "circuit.version_saved": "saved a version of",
  "circuit.deleted": "deleted circuit",
  "run.launched": "launched run",
  "run.cancelled": "cancelled run",
  "run.deleted": "deleted run",
  "run.finished": "finished run",
  "comparison.created": "created comparison",
  "comparison.launched": "launched comparison",
  "comparison.cancelled": "cancelled comparison",
  "comparison.deleted": "deleted comparison",
  "dataset.uploaded": "uploaded dataset",
  "dataset.deleted": "deleted dataset",
  "invitation.sent": "invited",
  "invitation.accepted": "accepted an invitation",
  "invitation.revoked": "revoked the invitation of",
  "member.added": "added member",
  "member.role_changed": "changed the role of",
  "member.removed": "removed member",
  "lab.renamed": "renamed the lab",
} as const;
export type AuditAction = keyof typeof AUDIT_ACTIONS;
export const AUDIT_ACTION_NAMES = Object.keys(AUDIT_ACTIONS) as AuditAction[];

/** The kinds of thing an event is about (the prefix of its action). */
export const AUDIT_SUBJECTS = ["circuit", "run", "comparison", "dataset", "invitation", "member", "lab"] as const;

export interface AuditEventJson {
  id: string; action: AuditAction; actor: string | null; target_type: string; target_id: string | null;
  details: Record<string, unknown>; created_at: string;
}

const Day = /^\d{4}-\d{2}-\d{2}$/;
const DateBound = z.string().trim().refine((s) => (Day.test(s) || !Number.isNaN(Date.parse(s))) && !Number.isNaN(Date.parse(s)), "must be a date (YYYY-MM-DD) or an ISO date-time");

/**
 * GET /api/labs/:id/audit filters: `action` is one action or a subject (`run` = every run
 * action); `actor` an e-mail, or `worker` for what the background worker did; `from`/`to`
 * whole days (UTC, both inclusive) or instants.
 */
export const AuditQuery = z.object({
  action: z.string().trim().refine((a) => (AUDIT_ACTION_NAMES as string[]).includes(a) || (AUDIT_SUBJECTS as readonly string[]).includes(a), "unknown action").optional(),
  actor: z.string().trim().toLowerCase().max(254).optional(),
  from: DateBound.optional(),
  to: DateBound.optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
  offset: z.coerce.number().int().min(0).max(1_000_000).default(0),
}).transform((q, ctx) => {
  const from = q.from ? new Date(q.from) : undefined;
  // A bare day as the upper bound means up to the end of that day.
  const to = q.to ? new Date(Day.test(q.to) ? Date.parse(q.to) + 86_400_000 - 1 : q.to) : undefined;
  if (from && to && from > to) ctx.addIssue({ code: "custom", path: ["to"], message: "is before from" });
  return { ...q, from, to };
});
export type AuditQuery = z.infer<typeof AuditQuery>;

/** `lab_id` beside the filters, for routes that take the lab in the query string. */
export const LabIdQuery = z.object({ lab_id: IdField });

/** One line for an event, e.g. `owner@x changed the role of reviewer@x (reviewer → modeler)`. */
export function describeAuditEvent(e: Pick<AuditEventJson, "action" | "actor" | "details" | "target_id">): string {
  const who = e.actor ?? "the worker";
  const d = e.details;
  const name = e.action.startsWith("run.")
    ? `#${e.target_id ?? "?"}${typeof d.circuit === "string" ? ` of "${d.circuit}"${d.version_number ? ` v${String(d.version_number)}` : ""}` : ""}`
    : typeof d.name === "string" ? `"${d.name}"` : typeof d.email === "string" ? d.email : e.target_id ? `#${e.target_id}` : "";
  const verb = AUDIT_ACTIONS[e.action] ?? e.action;
  let extra = "";
  if (e.action === "member.role_changed") extra = ` (${String(d.from)} → ${String(d.to)})`;
  else if (e.action === "run.finished") extra = `: ${String(d.status)}${d.error ? ` (${String(d.error)})` : ""}`;
  else if (e.action === "invitation.sent" || e.action === "member.added") extra = ` as ${String(d.role)}`;
  else if (e.action === "circuit.version_saved") extra = ` as version ${String(d.number)}`;
  else if (e.action === "comparison.launched") extra = ` (${String(d.runs)} design runs)`;
  else if (e.action === "comparison.cancelled" && Number(d.runs_cancelled) > 0) extra = ` and ${String(d.runs_cancelled)} of its runs`;
  else if (e.action === "invitation.accepted") return `${who} accepted the invitation and joined as ${String(d.role)}${d.account_created ? " (new account)" : ""}`;
  else if (e.action === "lab.renamed") return `${who} renamed the lab from "${String(d.from)}" to "${String(d.to)}"`;
  return `${who} ${verb} ${name}${extra}`.replace(/\s+/g, " ").trim();
}
