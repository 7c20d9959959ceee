import { requireUser } from "@/lib/auth/session";
import { cancelRun, getRun } from "@/lib/data/runs";
import { conflict, handle } from "@/lib/http";
import { requireRun, runToJson } from "@/lib/runs";

export const POST = handle("POST /api/runs/:id/cancel", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const run = await requireRun(user.id, (await ctx.params).id, "run:cancel");
  if (!(await cancelRun(run.id))) throw conflict(`status: the run is already ${run.status}`);
  return Response.json(runToJson((await getRun(run.id))!));
});
