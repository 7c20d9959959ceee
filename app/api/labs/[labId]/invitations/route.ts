import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { invitationState, listOpenInvitations, sendInvitation, type InvitationRow } from "@/lib/data/invitations";
import { handle, idParam, readJson } from "@/lib/http";
import { InvitationCreate } from "@/lib/schemas/invitations";

type Ctx = { params: Promise<{ labId: string }> };

const toJson = (i: InvitationRow) => ({
  id: i.id, email: i.email, role: i.role, state: invitationState(i), invited_by: i.invitedByEmail, created_at: i.createdAt, expires_at: i.expiresAt,
});

/** Open invitations (not accepted, not revoked; expired ones say so). Owners only. */
export const GET = handle("GET /api/labs/:id/invitations", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  await requireLabRole(user.id, labId, "lab:manage");
  return Response.json({ invitations: (await listOpenInvitations(labId)).map(toJson) });
});

/**
 * Invites an e-mail address with a role and e-mails the one-time link. The link is in the
 * answer too (`accept_url`), for the owner to pass on when `mail` is not "sent".
 */
export const POST = handle("POST /api/labs/:id/invitations", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  await requireLabRole(user.id, labId, "lab:manage");
  const input = InvitationCreate.parse(await readJson(req, 16 * 1024));
  const { invitation, link, mail } = await sendInvitation(labId, { id: user.id, email: user.email, name: user.name }, input);
  return Response.json({ ...toJson(invitation), mail: mail.status, ...(mail.status === "failed" ? { mail_error: mail.error } : {}), accept_url: link }, { status: 201 });
});
