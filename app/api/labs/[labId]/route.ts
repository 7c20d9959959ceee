import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { getLab, renameLab } from "@/lib/data/labs";
import { handle, idParam, notFound, readJson } from "@/lib/http";
import { LabRename } from "@/lib/schemas/auth";

type Ctx = { params: Promise<{ labId: string }> };

export const GET = handle("GET /api/labs/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  const role = await requireLabRole(user.id, labId, "lab:read");
  const lab = await getLab(labId);
  if (!lab) throw notFound("lab");
  return Response.json({ id: String(lab.id), name: lab.name, role, created_at: lab.createdAt });
});

export const PATCH = handle("PATCH /api/labs/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const labId = idParam((await ctx.params).labId, "lab");
  await requireLabRole(user.id, labId, "lab:manage");
  const { name } = LabRename.parse(await readJson(req));
  await renameLab(labId, name, (r) => r && r.from !== name ? { labId, actor: user, action: "lab.renamed", target: { type: "lab", id: labId }, details: { from: r.from, to: name } } : null);
  return Response.json({ id: labId, name });
});
