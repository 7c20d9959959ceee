import { requireUser } from "@/lib/auth/session";
import { getRunSummaryParts } from "@/lib/data/runs";
import { conflict, handle } from "@/lib/http";
import { requireRun } from "@/lib/runs";

/** The `simulate` JSON of a finished run, plus `trace` (the mean-field path on the same grid). */
export const GET = handle("GET /api/runs/:id/summary", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const run = await requireRun(user.id, (await ctx.params).id);
  const parts = run.status === "succeeded" ? await getRunSummaryParts(run.id) : null;
  if (!parts) throw conflict(`status: the run is ${run.status}; its summary exists once it has succeeded`);
  // Stored as JSON text: splice the trace in without re-encoding the numbers.
  const body = parts.trace && !parts.summary.includes('"trace":') ? `${parts.summary.slice(0, -1)},"trace":${parts.trace}}` : parts.summary;
  return new Response(body, { headers: { "content-type": "application/json" } });
});
