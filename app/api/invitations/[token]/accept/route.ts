import { getCurrentUser } from "@/lib/auth/session";
import { acceptInvitation } from "@/lib/data/invitations";
import { badRequest, handle, notFound, parseJsonText, requireCleanText, requireJsonType } from "@/lib/http";
import { InvitationAccept, InvitationToken } from "@/lib/schemas/invitations";

/**
 * Accepts an invitation once. Signed in: the account (with the invited e-mail) joins the lab.
 * Not signed in: `{ name, password }` creates the account for the invited e-mail, which joins.
 * 404 unknown link; 410 used, withdrawn or expired; 403 signed in as someone else; 409 the
 * e-mail has an account already (sign in first).
 */
export const POST = handle("POST /api/invitations/:token/accept", async (req, ctx: { params: Promise<{ token: string }> }) => {
  const parsed = InvitationToken.safeParse((await ctx.params).token);
  if (!parsed.success) throw notFound("token");
  const user = await getCurrentUser(req);
  // An empty body is fine here (a signed-in invitee sends nothing).
  const input = InvitationAccept.parse(await readJsonOrEmpty(req));
  const r = await acceptInvitation(parsed.data, user ? { id: user.id, email: user.email } : null, input);
  return Response.json({
    lab_id: r.labId, user_id: r.userId, role: r.role, account_created: r.accountCreated, already_member: r.alreadyMember,
  }, { status: r.accountCreated ? 201 : 200 });
});

async function readJsonOrEmpty(req: Request): Promise<unknown> {
  const text = await req.text();
  if (text.length > 16 * 1024) throw badRequest("body: larger than 16 KB");
  if (!text.trim()) return {};
  requireJsonType(req);
  const value = parseJsonText(text, "body");
  requireCleanText(value);
  return value;
}
