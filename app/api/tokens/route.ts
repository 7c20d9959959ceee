import { z } from "zod";

import { requireUser } from "@/lib/auth/session";
import { createApiToken, listApiTokens } from "@/lib/data/tokens";
import { forbidden, handle, readJson } from "@/lib/http";

const TokenCreate = z.object({ name: z.string().trim().min(1, "is required").max(80, "at most 80 characters") }).strict();

export const GET = handle("GET /api/tokens", async (req) => {
  const user = await requireUser(req);
  const tokens = await listApiTokens(user.id);
  return Response.json({
    tokens: tokens.map((t) => ({ id: String(t.id), name: t.name, prefix: t.prefix, created_at: t.createdAt, last_used_at: t.lastUsedAt, revoked_at: t.revokedAt })),
  });
});

export const POST = handle("POST /api/tokens", async (req) => {
  const user = await requireUser(req);
  // A token cannot mint more tokens: creating one needs the signed-in user.
  if (user.via === "token") throw forbidden("session: API tokens are created from a signed-in session, not with a token");
  const { name } = TokenCreate.parse(await readJson(req));
  const { id, token } = await createApiToken(user.id, name);
  return Response.json({ id, name, token }, { status: 201 });
});
