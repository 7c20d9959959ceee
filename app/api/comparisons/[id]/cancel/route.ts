import { requireUser } from "@/lib/auth/session";
import { cancelComparison, loadComparisonJson } from "@/lib/comparisons";
import { handle } from "@/lib/http";

/** Cancels a running comparison and every unfinished run of its designs. */
export const POST = handle("POST /api/comparisons/:id/cancel", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const c = await cancelComparison(user, (await ctx.params).id);
  return Response.json(await loadComparisonJson(c));
});
