import { db } from "@/db/client";

export interface ComparisonTestKey { comparisonId: string; designA: string; designB: string; species: string; engineVersion: string }

/** The stored answer (JSON text) of a difference test, or null when it was never computed. */
export async function getComparisonTest(key: ComparisonTestKey): Promise<string | null> {
  const row = await db("comparisonTests").where({ ...key }).first("body");
  return row ? (row.body as string) : null;
}

/** Stores a difference test's answer; a second web process computing the same one keeps the first. */
export async function putComparisonTest(key: ComparisonTestKey, body: string): Promise<void> {
  await db("comparisonTests").insert({ ...key, body }).onConflict(["comparisonId", "designA", "designB", "species", "engineVersion"]).ignore();
}
