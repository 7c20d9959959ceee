import { requireUser } from "@/lib/auth/session";
import { requireVersion } from "@/lib/data/version-access";
import { handle } from "@/lib/http";
import { circuitToSbml } from "@/ssa/sbml-export";

/** The version as SBML Level 3 Version 2 (it imports back to the same network). */
export const GET = handle("GET /api/versions/:id/sbml", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const v = await requireVersion(user.id, (await ctx.params).id);
  const slug = (v.circuit.name ?? "circuit").replace(/[^A-Za-z0-9]+/g, "-").replace(/^-|-$/g, "").toLowerCase() || "circuit";
  return new Response(circuitToSbml(v.circuit), {
    headers: { "content-type": "application/sbml+xml; charset=utf-8", "content-disposition": `inline; filename="${slug}-v${v.number}.xml"` },
  });
});
