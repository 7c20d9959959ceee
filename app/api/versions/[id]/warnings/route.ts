import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { handle } from "@/lib/http";

/**
 * The warnings of the SBML import that made the version (`{ "warnings": [] }` for one saved as a
 * circuit file). Apart from GET /api/versions/:id, whose body is the circuit file itself.
 */
export const GET = handle("GET /api/versions/:id/warnings", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  return Response.json({ version_id: v.id, source_format: v.sourceFormat, warnings: v.importWarnings });
});
