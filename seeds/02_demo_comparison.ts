import type { Knex } from "knex";

// The demo lab's comparison of four ring-timer designs (PRODUCT.md "Demo scenario"): queued
// through the normal launch path, so the worker finishes it soon after `npm start`. Only when
// the demo lab exists and holds no comparison yet; nothing outside the demo lab is touched.
export async function seed(knex: Knex): Promise<void> {
  const lab = await knex("labs").where({ is_demo: true, name: "Soil Sentinel" }).first("id");
  if (!lab) return;
  if (await knex("comparisons").where({ lab_id: lab.id }).first("id")) {
    console.log("[seed] demo comparison already present");
    return;
  }
  const modeler = await knex("memberships as m").join("users as u", "u.id", "m.user_id")
    .where({ "m.lab_id": lab.id, "m.role": "modeler", "u.is_demo": true }).orderBy("u.id").first("u.id");
  if (!modeler) return;
  // Loaded here so the app's modules (and their database pool and queue client) start only when needed.
  const { ensureDemoComparison } = await import("../lib/demo/comparison");
  const { closeDb } = await import("../db/client");
  const { getSender } = await import("../lib/jobs");
  try {
    const { id, runs } = await ensureDemoComparison(String(lab.id), String(modeler.id));
    console.log(`[seed] demo comparison #${id} queued (${runs?.length ?? 0} ensembles; the worker finishes them)`);
  } finally {
    await (await getSender()).stop({ graceful: false, close: true }).catch(() => undefined);
    await closeDb();
  }
}
