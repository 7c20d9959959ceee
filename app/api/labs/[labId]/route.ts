import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { recordAudit } from "@/lib/data/audit";
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
  const before = await getLab(labId);
  await renameLab(labId, name);
  if (before && before.name !== name) await recordAudit({ labId, actor: user, action: "lab.renamed", target: { type: "lab", id: labId }, details: { from: before.name, to: name } });
  return Response.json({ id: labId, name });
});
