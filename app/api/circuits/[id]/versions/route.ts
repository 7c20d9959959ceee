import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { circuitFromBody } from "@/lib/circuit-input";
import { addVersion, getCircuit } from "@/lib/data/circuits";
import { handle, idParam, notFound, readJson } from "@/lib/http";
import { VersionCreate } from "@/lib/schemas/api";

export const POST = handle("POST /api/circuits/:id/versions", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const circuit = await getCircuit(idParam((await ctx.params).id, "circuit"));
  if (!circuit) throw notFound("circuit");
  await requireLabRole(user.id, circuit.labId, "circuit:write", "circuit");
  const body = VersionCreate.parse(await readJson(req, 6 * 1024 * 1024));
  const parsed = await circuitFromBody(body);
  const v = await addVersion(circuit.id, user.id, parsed.circuit, body.message, parsed.sourceFormat, (r) => r.created ? {
    labId: circuit.labId, actor: user, action: "circuit.version_saved", target: { type: "circuit", id: circuit.id },
    details: { name: parsed.circuit.name, version_id: r.versionId, number: r.number, ...(body.message ? { message: body.message } : {}) },
  } : null, parsed.warnings);
  return Response.json({ id: circuit.id, version_id: v.versionId, number: v.number, created: v.created, ...(parsed.warnings.length ? { warnings: parsed.warnings } : {}) }, { status: v.created ? 201 : 200 });
});
