import { requireUser } from "@/lib/auth/session";
import { comparisonFileBase, noiseTableCsv } from "@/lib/view/comparison-view";
import { loadComparisonJson, requireComparison } from "@/lib/comparisons";
import { handle } from "@/lib/http";

/** The noise table as CSV (one row per design and species, intervals beside each estimate). */
export const GET = handle("GET /api/comparisons/:id/csv", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const c = await loadComparisonJson(await requireComparison(user.id, (await ctx.params).id));
  return new Response(noiseTableCsv(c), {
    headers: { "content-type": "text/csv; charset=utf-8", "content-disposition": `attachment; filename="${comparisonFileBase(c.id, "noise-table")}.csv"` },
  });
});
