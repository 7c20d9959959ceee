import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { revokeInvitation } from "@/lib/data/invitations";
import { handle, idParam } from "@/lib/http";

/** Withdraws an open invitation: its link stops working. Owners only. */
export const DELETE = handle("DELETE /api/labs/:id/invitations/:invitationId", async (req, ctx: { params: Promise<{ labId: string; invitationId: string }> }) => {
  const user = await requireUser(req);
  const p = await ctx.params;
  const labId = idParam(p.labId, "lab");
  const id = idParam(p.invitationId, "invitation");
  await requireLabRole(user.id, labId, "lab:manage");
  await revokeInvitation(labId, id, { id: user.id, email: user.email });
  return new Response(null, { status: 204 });
});
