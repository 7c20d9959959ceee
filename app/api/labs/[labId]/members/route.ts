import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { addMember, listMembers } from "@/lib/data/labs";
import { handle, idParam, readJson } from "@/lib/http";
import { MemberAdd } from "@/lib/schemas/auth";

type Ctx = { params: Promise<{ labId: string }> };
const toJson = (m: { userId: string; email: string; name: string; role: string; joinedAt: Date }) =>
  ({ user_id: m.userId, email: m.email, name: m.name, role: m.role, joined_at: m.joinedAt });

export const GET = handle("GET /api/labs/:id/members", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  await requireLabRole(user.id, labId, "lab:read");
  return Response.json({ members: (await listMembers(labId)).map(toJson) });
});

export const POST = handle("POST /api/labs/:id/members", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  await requireLabRole(user.id, labId, "lab:manage");
  const { email, role } = MemberAdd.parse(await readJson(req));
  const member = await addMember(labId, email, role, (m) => ({ labId, actor: user, action: "member.added", target: { type: "user", id: m.userId }, details: { email: m.email, role } }));
  return Response.json(toJson(member), { status: 201 });
});
