import { requireUser } from "@/lib/auth/session";
import { respondWithDifferenceTest } from "@/lib/comparisons";
import { handle } from "@/lib/http";
import { ComparisonTestQuery } from "@/lib/schemas/comparisons";

/**
 * "Is B less noisy than A?": `?a=<design id>&b=<design id>&species=<id>`; a read, reproducible.
 * Computed once on the engine pool and stored (`x-burstwise-cache: miss`, then `hit`).
 */
export const GET = handle("GET /api/comparisons/:id/test", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const q = ComparisonTestQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  return respondWithDifferenceTest(user.id, (await ctx.params).id, q);
});
