import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { setMemberRole } from "@/lib/data/labs";
import { handle, idParam, readJson } from "@/lib/http";
import { MemberRole } from "@/lib/schemas/auth";

type Ctx = { params: Promise<{ labId: string; userId: string }> };

async function target(ctx: Ctx) {
  const p = await ctx.params;
  return { labId: idParam(p.labId, "lab"), userId: idParam(p.userId, "member") };
}

export const PATCH = handle("PATCH /api/labs/:id/members/:userId", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const { labId, userId } = await target(ctx);
  await requireLabRole(user.id, labId, "lab:manage");
  const { role } = MemberRole.parse(await readJson(req));
  await setMemberRole(labId, userId, role, (before) => before.from !== role
    ? { labId, actor: user, action: "member.role_changed", target: { type: "user", id: userId }, details: { email: before.email, from: before.from, to: role } }
    : null);
  return Response.json({ user_id: userId, role });
});

export const DELETE = handle("DELETE /api/labs/:id/members/:userId", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const { labId, userId } = await target(ctx);
  await requireLabRole(user.id, labId, "lab:manage");
  await setMemberRole(labId, userId, null, (before) => ({
    labId, actor: user, action: "member.removed", target: { type: "user", id: userId }, details: { email: before.email, role: before.from },
  }));
  return new Response(null, { status: 204 });
});
