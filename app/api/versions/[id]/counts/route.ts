import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { handle } from "@/lib/http";
import { countsTable } from "@/ssa/model";

/** Ω, every converted constant and every initial count (the Counts view). */
export const GET = handle("GET /api/versions/:id/counts", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  const t = countsTable(v.circuit);
  return Response.json({
    omega: t.omega, omega_unit: t.omegaUnit, volume_fL: t.volumeFL, amount_unit: t.amountUnit, time_unit: t.timeUnit, avogadro: t.avogadro,
    species: t.species,
    constants: t.constants.map((c) => ({
      reaction: c.reaction, law: c.law, name: c.name, value: c.value, unit: c.unit, parameter: c.parameter ?? null,
      molecules: c.molecules, molecules_unit: c.moleculesUnit, note: c.note ?? null,
    })),
  });
});
