import { requireUser } from "@/lib/auth/session";
import { cancelRun, getRun } from "@/lib/data/runs";
import { conflict, handle } from "@/lib/http";
import { requireRun, runToJson } from "@/lib/runs";

export const POST = handle("POST /api/runs/:id/cancel", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const run = await requireRun(user.id, (await ctx.params).id, "run:cancel");
  const cancelled = await cancelRun(run.id, (ok) => ok
    ? { labId: run.labId, actor: user, action: "run.cancelled", target: { type: "run", id: run.id }, details: { circuit: run.circuitName, version_number: run.versionNumber } }
    : null);
  if (!cancelled) throw conflict(`status: the run is already ${(await getRun(run.id))?.status ?? run.status}`);
  return Response.json(runToJson((await getRun(run.id))!));
});
