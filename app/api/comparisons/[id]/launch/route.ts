import { requireUser } from "@/lib/auth/session";
import { launchComparison } from "@/lib/comparisons";
import { handle } from "@/lib/http";

/** Launches one ensemble per design (a draft, or again after a failure or cancel). */
export const POST = handle("POST /api/comparisons/:id/launch", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const { id } = await ctx.params;
  const { runs, cost } = await launchComparison(user.id, id, user);
  return Response.json({ id, runs, cost }, { status: 202 });
});
