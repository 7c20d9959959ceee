import { createHash, randomBytes } from "node:crypto";

import { db } from "@/db/client";
import { notFound, tooMany } from "@/lib/http";

const MAX_TOKENS_PER_USER = 20;
const sha256 = (s: string) => createHash("sha256").update(s).digest("hex");

export interface ApiTokenInfo { id: string; name: string; prefix: string; createdAt: Date; lastUsedAt: Date | null; revokedAt: Date | null }

/**
 * Creates a personal API token; the plain token is returned here once and stored only as
 * its SHA-256 (a 256-bit random token needs no slow hash).
 */
export async function createApiToken(userId: string, name: string): Promise<{ id: string; token: string }> {
  const active = await db("api_tokens").where({ userId }).whereNull("revokedAt").count<{ count: string }[]>("* as count");
  if (Number(active[0]?.count ?? 0) >= MAX_TOKENS_PER_USER) throw tooMany(`tokens: at most ${MAX_TOKENS_PER_USER} active tokens per user; revoke one first`);
  const token = `bw_${randomBytes(32).toString("base64url")}`;
  const [row] = await db("api_tokens").insert({ userId, name, tokenHash: sha256(token), prefix: token.slice(0, 9) }).returning(["id"]);
  return { id: String(row.id), token };
}

export async function listApiTokens(userId: string): Promise<ApiTokenInfo[]> {
  return db("api_tokens").where({ userId }).orderBy("createdAt", "desc")
    .select("id", "name", "prefix", "createdAt", "lastUsedAt", "revokedAt");
}

/** @throws HttpError 404 when the token is not the user's. */
export async function revokeApiToken(userId: string, id: string): Promise<void> {
  const n = await db("api_tokens").where({ id, userId }).whereNull("revokedAt").update({ revokedAt: db.fn.now() });
  if (!n) throw notFound("token");
}

/** The owner of a valid (unrevoked) token, or null. */
export async function getUserByApiToken(token: string): Promise<{ id: string; email: string; name: string } | null> {
  if (!token.startsWith("bw_") || token.length > 100) return null;
  const row = await db("api_tokens as t").join("users as u", "u.id", "t.userId")
    .where("t.tokenHash", sha256(token)).whereNull("t.revokedAt")
    .first("u.id", "u.email", "u.name", "t.id as tokenId");
  if (!row) return null;
  await db("api_tokens").where({ id: row.tokenId }).update({ lastUsedAt: db.fn.now() });
  return { id: String(row.id), email: row.email, name: row.name };
}
