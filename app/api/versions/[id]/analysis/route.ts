import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { respondWithVersionResult } from "@/lib/engine";
import { handle } from "@/lib/http";

/**
 * Steady state, eigenvalues, verdict and LNA: the `analyze` JSON of the command line, computed on
 * the engine pool within ENGINE_BUDGET_S and stored with the version (lib/engine.ts).
 */
export const GET = handle("GET /api/versions/:id/analysis", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  return respondWithVersionResult(v, "analysis");
});
