import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { handle } from "@/lib/http";

/**
 * The version's circuit file, exactly as stored (canonical JSON). `x-import-warnings` counts the
 * warnings of the SBML import that made it (GET /api/versions/:id/warnings lists them).
 */
export const GET = handle("GET /api/versions/:id", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  return Response.json(v.circuit, { headers: { "x-content-hash": v.contentHash, "x-version-number": String(v.number), "x-import-warnings": String(v.importWarnings.length) } });
});
