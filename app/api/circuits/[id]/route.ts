import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { deleteCircuit, getCircuit, listVersions } from "@/lib/data/circuits";
import { handle, idParam, notFound } from "@/lib/http";

type Ctx = { params: Promise<{ id: string }> };

export const GET = handle("GET /api/circuits/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const circuit = await getCircuit(idParam((await ctx.params).id, "circuit"));
  if (!circuit) throw notFound("circuit");
  await requireLabRole(user.id, circuit.labId, "lab:read", "circuit");
  const versions = await listVersions(circuit.id);
  return Response.json({
    id: circuit.id, lab_id: circuit.labId, name: circuit.name, created_at: circuit.createdAt, updated_at: circuit.updatedAt,
    versions: versions.map((v) => ({ id: v.id, number: v.number, content_hash: v.contentHash, message: v.message, source_format: v.sourceFormat, created_at: v.createdAt, created_by: v.createdByEmail, warnings: v.importWarnings })),
  });
});

export const DELETE = handle("DELETE /api/circuits/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const circuit = await getCircuit(idParam((await ctx.params).id, "circuit"));
  if (!circuit) throw notFound("circuit");
  await requireLabRole(user.id, circuit.labId, "delete", "circuit");
  const deleted = await deleteCircuit(circuit.id, (gone) => gone ? { labId: circuit.labId, actor: user, action: "circuit.deleted", target: { type: "circuit", id: circuit.id }, details: { name: circuit.name } } : null);
  if (!deleted) throw notFound("circuit");
  return new Response(null, { status: 204 });
});
