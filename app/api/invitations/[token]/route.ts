import { getInvitationByToken } from "@/lib/data/invitations";
import { handle, notFound } from "@/lib/http";
import { InvitationToken } from "@/lib/schemas/invitations";

/** What an invitation link offers (public: the token is the credential). */
export const GET = handle("GET /api/invitations/:token", async (_req, ctx: { params: Promise<{ token: string }> }) => {
  const parsed = InvitationToken.safeParse((await ctx.params).token);
  if (!parsed.success) throw notFound("token");
  const inv = await getInvitationByToken(parsed.data);
  if (!inv) throw notFound("token");
  return Response.json({
    state: inv.state, lab_name: inv.labName, email: inv.email, role: inv.role, invited_by: inv.invitedBy,
    expires_at: inv.expiresAt, has_account: inv.hasAccount,
  });
});
