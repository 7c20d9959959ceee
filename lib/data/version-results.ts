import { db } from "@/db/client";

export type VersionResultKind = "analysis" | "counts";

export interface VersionResult {
  status: 200 | 422;
  /** The JSON text as served. */
  body: string;
}

/** The stored answer for a version, or null when there is none (or only an expired refusal). */
export async function getVersionResult(versionId: string, kind: VersionResultKind, engineVersion: string): Promise<VersionResult | null> {
  const row = await db("versionResults")
    .where({ versionId, kind, engineVersion })
    .andWhere((q) => q.whereNull("expiresAt").orWhere("expiresAt", ">", db.fn.now()))
    .first("status", "body");
  return row ? { status: row.status, body: row.body } : null;
}

/**
 * Stores an answer (a later one for the same key replaces it: two web processes may both compute).
 * `ttlS` makes it expire (refusals that depend on load); answers of the engine itself never do.
 */
export async function putVersionResult(versionId: string, kind: VersionResultKind, engineVersion: string, result: VersionResult, ttlS?: number): Promise<void> {
  const expiresAt = ttlS === undefined ? null : db.raw("now() + make_interval(secs => ?)", [ttlS]);
  await db("versionResults")
    .insert({ versionId, kind, engineVersion, status: result.status, body: result.body, expiresAt })
    .onConflict(["versionId", "kind", "engineVersion"])
    .merge(["status", "body", "expiresAt", "createdAt"]);
}
