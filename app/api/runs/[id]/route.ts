import { requireUser } from "@/lib/auth/session";
import { deleteRun } from "@/lib/data/runs";
import { handle, notFound } from "@/lib/http";
import { requireRun, runToJson } from "@/lib/runs";

type Ctx = { params: Promise<{ id: string }> };

export const GET = handle("GET /api/runs/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  return Response.json(runToJson(await requireRun(user.id, (await ctx.params).id)));
});

export const DELETE = handle("DELETE /api/runs/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const run = await requireRun(user.id, (await ctx.params).id, "delete");
  const deleted = await deleteRun(run.id, (gone) => gone ? { labId: run.labId, actor: user, action: "run.deleted", target: { type: "run", id: run.id }, details: { circuit: run.circuitName, version_number: run.versionNumber, status: run.status } } : null);
  if (!deleted) throw notFound("run");
  return new Response(null, { status: 204 });
});
