import { requireUser } from "@/lib/auth/session";
import { loadComparisonJson, removeComparison, requireComparison } from "@/lib/comparisons";
import { handle } from "@/lib/http";

type Ctx = { params: Promise<{ id: string }> };

/** The comparison, its designs with their runs' progress, and the noise table once computed. */
export const GET = handle("GET /api/comparisons/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  const c = await requireComparison(user.id, (await ctx.params).id);
  return Response.json(await loadComparisonJson(c));
});

/** Deletes the comparison (owner); its finished runs stay in the lab's runs. */
export const DELETE = handle("DELETE /api/comparisons/:id", async (req, ctx: Ctx) => {
  const user = await requireUser(req);
  await removeComparison(user, (await ctx.params).id);
  return new Response(null, { status: 204 });
});
