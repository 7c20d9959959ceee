import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { respondWithVersionResult } from "@/lib/engine";
import { handle } from "@/lib/http";

/**
 * Ω, every converted constant and every initial count (the Counts view), computed on the engine
 * pool within ENGINE_BUDGET_S and stored with the version (lib/engine.ts).
 */
export const GET = handle("GET /api/versions/:id/counts", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  return respondWithVersionResult(v, "counts");
});
