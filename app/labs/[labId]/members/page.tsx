import type { Metadata } from "next";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { latestAuditEventId, listAuditActors } from "@/lib/data/audit";
import { invitationState, listOpenInvitations } from "@/lib/data/invitations";
import { getLab, listMembers } from "@/lib/data/labs";
import { listNotificationSettings } from "@/lib/data/notifications";

import { AuditTrail } from "./audit-trail";
import { Invitations } from "./invitations";
import { MemberControls } from "./member-controls";
import { NotificationSettings } from "./notification-settings";

export const metadata: Metadata = { title: "Lab" };

const ROLE_MEANING: Record<string, string> = {
  owner: "everything a modeler does, plus members, roles and deleting",
  modeler: "writes circuits, launches runs and comparisons, uploads data",
  reviewer: "reads and downloads everything, changes nothing",
};

function Section({ title, id, children, note }: { title: string; id: string; children: React.ReactNode; note?: React.ReactNode }) {
  return (
    <section aria-labelledby={id} className="flex flex-col gap-3">
      <div>
        <h2 id={id} className="text-lg font-semibold">{title}</h2>
        {note && <p className="text-sm text-ink-soft">{note}</p>}
      </div>
      {children}
    </section>
  );
}

export default async function LabMembersPage({ params }: { params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const { user, lab: membership } = await requirePageLab(labId, `/labs/${labId}/members`);
  const role = membership.role;
  const canManage = may(role, "lab:manage");
  const canAudit = may(role, "audit:read");
  const [lab, members, pending, settings, actors, revision] = await Promise.all([
    getLab(labId), listMembers(labId), canManage ? listOpenInvitations(labId) : [], listNotificationSettings(user.id),
    canAudit ? listAuditActors(labId) : [], canAudit ? latestAuditEventId(labId) : "0",
  ]);
  const mine = settings.find((s) => s.labId === labId)?.runs ?? "off";
  return (
    <div className="flex flex-col gap-8">
      <h1 className="text-2xl font-semibold">{lab?.name}: members and roles</h1>
      <Section title="Members" id="members">
        <dl className="grid gap-1 text-sm text-ink-soft sm:grid-cols-[auto_1fr] sm:gap-x-4">
          {Object.entries(ROLE_MEANING).map(([r, m]) => (
            <div key={r} className="contents"><dt className="font-semibold text-ink">{r}</dt><dd>{m}</dd></div>
          ))}
        </dl>
        <MemberControls
          labId={labId} canManage={canManage} selfId={user.id}
          members={members.map((m) => ({ userId: m.userId, email: m.email, name: m.name, role: m.role }))}
        />
      </Section>
      {canManage && (
        <Section title="Invitations" id="invitations" note="The invitee gets a link that works once and expires; it lets them create an account if they have none.">
          <Invitations labId={labId} pending={pending.map((p) => ({
            id: p.id, email: p.email, role: p.role, state: invitationState(p), invitedBy: p.invitedByEmail, expiresAt: new Date(p.expiresAt).toISOString(),
          }))} />
        </Section>
      )}
      <Section title="Run e-mails" id="notifications" note="Your own choice for this lab; each run sends you at most one e-mail, with a link to it.">
        <NotificationSettings labId={labId} initial={mine} />
      </Section>
      {canAudit && (
        <Section title="Audit trail" id="audit" note="Who created, changed, ran, cancelled, deleted, uploaded or invited, and when. Only owners see it.">
          <AuditTrail labId={labId} actors={actors} revision={revision} />
        </Section>
      )}
    </div>
  );
}
