import { requireUser } from "@/lib/auth/session";
import { replayCell } from "@/lib/cell-replay";
import { handle } from "@/lib/http";
import { requireRun } from "@/lib/runs";
import { CellQuery } from "@/lib/schemas/runs";

/**
 * Cell `index` of a succeeded ensemble: one of the sample cells stored at finalize, else replayed
 * alone from (seed, index) within the run's limits (lib/cell-replay.ts): the `trajectory` JSON,
 * optionally cut to `species=A,B` and `every=K`th grid point.
 */
export const GET = handle("GET /api/runs/:id/cells/:index", async (req, ctx: { params: Promise<{ id: string; index: string }> }) => {
  const user = await requireUser(req);
  const p = await ctx.params;
  const run = await requireRun(user.id, p.id);
  const query = CellQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  const json = await replayCell(run, p.index, query, req.signal);
  return new Response(json, { headers: { "content-type": "application/json" } });
});
