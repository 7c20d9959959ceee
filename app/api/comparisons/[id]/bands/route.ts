import { requireUser } from "@/lib/auth/session";
import { comparisonBands } from "@/lib/comparisons";
import { handle } from "@/lib/http";
import { ComparisonBandsQuery } from "@/lib/schemas/comparisons";

/** One species' bands (5–95%, 25–75%, median, mean) of every finished design: `?species=A&points=300`. */
export const GET = handle("GET /api/comparisons/:id/bands", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const q = ComparisonBandsQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  return Response.json(await comparisonBands(user.id, (await ctx.params).id, q));
});
