import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { handle, unprocessable } from "@/lib/http";
import { analyze, SteadyStateError } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";

/** Steady state, eigenvalues, verdict and LNA: the `analyze` JSON of the command line. */
export const GET = handle("GET /api/versions/:id/analysis", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  try {
    return Response.json(analyze(compileModel(v.circuit)));
  } catch (e) {
    if (e instanceof SteadyStateError) throw unprocessable(`circuit: ${e.message}`);
    throw e;
  }
});
