// The demo lab's own queries (the seeds, PRODUCT.md "Demo scenario"): what the demo already
// holds, and the rows only the demo writes directly (its lab and users, its invented dataset).
// Everything a member could also do (circuits, runs, comparisons) goes through the normal paths.
import { db } from "@/db/client";
import type { Role } from "@/lib/schemas/auth";

export const DEMO_LAB_NAME = "Soil Sentinel";

/** Whether the database holds any user who is not a demo user (then the demo is never loaded). */
export async function hasRealUsers(): Promise<boolean> {
  return !!(await db("users").where({ isDemo: false }).first("id"));
}

/** The demo lab and who created it, or null when the demo seed has not run. */
export async function getDemoLab(): Promise<{ id: string; createdBy: string } | null> {
  const lab = await db("labs").where({ isDemo: true }).orderBy("id").first("id", "createdBy");
  return lab ? { id: String(lab.id), createdBy: String(lab.createdBy) } : null;
}

/** Creates the demo lab, its users (all with `passwordHash`) and their memberships in one transaction; the first user creates the lab. */
export async function createDemoLab(users: readonly { email: string; name: string; role: Role }[], passwordHash: string): Promise<string> {
  return db.transaction(async (trx) => {
    const rows: { id: string; email: string }[] = await trx("users")
      .insert(users.map((u) => ({ email: u.email, name: u.name, passwordHash, isDemo: true })))
      .returning(["id", "email"]);
    const idOf = (email: string) => rows.find((r) => r.email === email)!.id;
    const [lab] = await trx("labs").insert({ name: DEMO_LAB_NAME, createdBy: idOf(users[0]!.email), isDemo: true }).returning(["id"]);
    await trx("memberships").insert(users.map((u) => ({ labId: lab.id, userId: idOf(u.email), role: u.role })));
    return String(lab.id);
  });
}

/** The demo lab (Soil Sentinel) and its first demo modeler, or null when the demo seed has not run. */
export async function findDemoModeler(): Promise<{ labId: string; modelerId: string } | null> {
  const lab = await db("labs").where({ isDemo: true, name: DEMO_LAB_NAME }).first("id");
  if (!lab) return null;
  const modeler = await db("memberships as m").join("users as u", "u.id", "m.userId")
    .where({ "m.labId": lab.id, "m.role": "modeler", "u.isDemo": true }).orderBy("u.id").first("u.id");
  return modeler ? { labId: String(lab.id), modelerId: String(modeler.id) } : null;
}

/** Whether the lab holds any comparison. */
export async function hasComparison(labId: string): Promise<boolean> {
  return !!(await db("comparisons").where({ labId }).first("id"));
}

/** Whether the lab holds a run of a circuit of that name. */
export async function hasRunOfCircuit(labId: string, circuitName: string): Promise<boolean> {
  return !!(await db("circuits as c").join("circuitVersions as v", "v.circuitId", "c.id").join("runs as r", "r.versionId", "v.id")
    .where({ "c.labId": labId, "c.name": circuitName }).first("r.id"));
}

/** Whether the lab holds a dataset of that name. */
export async function hasDataset(labId: string, name: string): Promise<boolean> {
  return !!(await db("datasets").where({ labId, name }).first("id"));
}

export interface DemoDatasetRow {
  labId: string; createdBy: string; name: string; kind: "series" | "snapshot"; description: string; fileName: string; contentType: string;
  original: Buffer; sha256: string; units: unknown; parsed: unknown; stats: unknown;
}

/** Stores the demo's invented dataset as created by the lab's owner (no audit event: nobody uploaded it). */
export async function insertDemoDataset(d: DemoDatasetRow): Promise<void> {
  await db("datasets").insert({
    ...d, sizeBytes: d.original.length, units: JSON.stringify(d.units), parsed: JSON.stringify(d.parsed), stats: JSON.stringify(d.stats),
  });
}
