import { requireUser } from "@/lib/auth/session";
import { cancelComparison, loadComparisonJson, recordComparisonEvent } from "@/lib/comparisons";
import { handle } from "@/lib/http";

/** Cancels a running comparison and every unfinished run of its designs. */
export const POST = handle("POST /api/comparisons/:id/cancel", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const { comparison: c, runsCancelled } = await cancelComparison(user.id, (await ctx.params).id);
  await recordComparisonEvent(user, c.id, "comparison.cancelled", { runs_cancelled: runsCancelled });
  return Response.json(await loadComparisonJson(c));
});
