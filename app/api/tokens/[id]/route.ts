import { requireUser } from "@/lib/auth/session";
import { revokeApiToken } from "@/lib/data/tokens";
import { handle, idParam } from "@/lib/http";

export const DELETE = handle("DELETE /api/tokens/:id", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  await revokeApiToken(user.id, idParam((await ctx.params).id, "token"));
  return new Response(null, { status: 204 });
});
