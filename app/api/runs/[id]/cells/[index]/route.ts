import { requireUser } from "@/lib/auth/session";
import { getRunCircuit } from "@/lib/data/runs";
import { conflict, handle, notFound, unprocessable } from "@/lib/http";
import { requireRun } from "@/lib/runs";
import { runTrajectory } from "@/ssa/node/run";
import { ENGINE_VERSION, reproducesResultsOf } from "@/ssa/version";

/** Cell `index` of an ensemble, replayed alone from (seed, index): the `trajectory` JSON. */
export const GET = handle("GET /api/runs/:id/cells/:index", async (req, ctx: { params: Promise<{ id: string; index: string }> }) => {
  const user = await requireUser(req);
  const p = await ctx.params;
  const run = await requireRun(user.id, p.id);
  if (run.kind !== "ensemble") throw unprocessable("index: a trace has no cells; only ensembles do");
  const index = /^(0|[1-9][0-9]{0,8})$/.test(p.index) ? Number(p.index) : NaN;
  if (!(index < run.settings.runs)) throw notFound(`cell ${p.index} (the run has cells 0 to ${run.settings.runs - 1})`);
  if (!reproducesResultsOf(run.engineVersion, run.method as "ssa" | "tau")) {
    throw conflict(`engine_version: this ${run.method} run was computed by ${run.engineVersion}, and this server's ${ENGINE_VERSION} draws ${run.method} cells differently; launch it again to replay its cells`);
  }
  const s = run.settings;
  const cell = runTrajectory(await getRunCircuit(run.id), {
    method: run.method, tEnd: s.t_end, dt: s.dt, seed: run.seed, index, units: s.units, overrides: s.overrides,
    ...(s.burn_in !== undefined ? { burnIn: s.burn_in } : {}),
    ...(s.tau_epsilon !== undefined ? { tauEpsilon: s.tau_epsilon } : {}),
  });
  return Response.json(cell);
});
