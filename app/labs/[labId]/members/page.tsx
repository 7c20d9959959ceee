import type { Metadata } from "next";

import { may } from "@/lib/access";
import { requirePageUser } from "@/lib/auth/page";
import { getLab, listMembers } from "@/lib/data/labs";

import { MemberControls } from "./member-controls";

export const metadata: Metadata = { title: "Lab" };

const ROLE_MEANING: Record<string, string> = {
  owner: "everything a modeler does, plus members, roles and deleting",
  modeler: "writes circuits, launches runs and comparisons, uploads data",
  reviewer: "reads and downloads everything, changes nothing",
};

export default async function LabMembersPage({ params }: { params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const user = await requirePageUser(`/labs/${labId}/members`);
  const role = user.labs.find((l) => l.id === labId)!.role;
  const [lab, members] = await Promise.all([getLab(labId), listMembers(labId)]);
  const canManage = may(role, "lab:manage");
  return (
    <div className="flex flex-col gap-6">
      <h1 className="text-2xl font-semibold">{lab?.name}: members and roles</h1>
      <dl className="grid gap-1 text-sm text-ink-soft sm:grid-cols-[auto_1fr] sm:gap-x-4">
        {Object.entries(ROLE_MEANING).map(([r, m]) => (
          <div key={r} className="contents"><dt className="font-semibold text-ink">{r}</dt><dd>{m}</dd></div>
        ))}
      </dl>
      <MemberControls
        labId={labId} canManage={canManage} selfId={user.id}
        members={members.map((m) => ({ userId: m.userId, email: m.email, name: m.name, role: m.role }))}
      />
    </div>
  );
}
