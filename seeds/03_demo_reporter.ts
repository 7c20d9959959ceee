import type { Knex } from "knex";

// The demo lab's constitutive reporter and its ensemble (PRODUCT.md "Demo scenario"), queued
// through the normal launch path so the worker finishes it soon after `npm start`. Only in the
// demo lab, and only once.
export async function seed(knex: Knex): Promise<void> {
  const lab = await knex("labs").where({ is_demo: true, name: "Soil Sentinel" }).first("id");
  if (!lab) return;
  const have = await knex("circuits as c").join("circuit_versions as v", "v.circuit_id", "c.id").join("runs as r", "r.version_id", "v.id")
    .where({ "c.lab_id": lab.id, "c.name": "Constitutive reporter (noise baseline)" }).first("r.id");
  if (have) {
    console.log("[seed] demo reporter already present");
    return;
  }
  const modeler = await knex("memberships as m").join("users as u", "u.id", "m.user_id")
    .where({ "m.lab_id": lab.id, "m.role": "modeler", "u.is_demo": true }).orderBy("u.id").first("u.id");
  if (!modeler) return;
  // Loaded here so the app's modules (and their database pool and queue client) start only when needed.
  const { ensureDemoReporter } = await import("../lib/demo/reporter");
  const { closeDb, openDb } = await import("../db/client");
  const { closeSender } = await import("../lib/jobs");
  openDb(); // an earlier seed may have closed the shared pool
  try {
    const { runId } = await ensureDemoReporter(String(lab.id), String(modeler.id));
    console.log(`[seed] demo reporter ensemble #${runId} queued (the worker finishes it)`);
  } finally {
    await closeSender();
    await closeDb();
  }
}
