import type { Knex } from "knex";

import { findDemoModeler } from "../lib/demo/modeler";

// The demo lab's comparison of four ring-timer designs (PRODUCT.md "Demo scenario"): queued
// through the normal launch path, so the worker finishes it soon after `npm start`. Only when
// the demo lab exists and holds no comparison yet; nothing outside the demo lab is touched.
export async function seed(knex: Knex): Promise<void> {
  const demo = await findDemoModeler(knex);
  if (!demo) return;
  if (await knex("comparisons").where({ lab_id: demo.labId }).first("id")) {
    console.log("[seed] demo comparison already present");
    return;
  }
  // Loaded here so the app's modules (and their database pool and queue client) start only when needed.
  const { ensureDemoComparison } = await import("../lib/demo/comparison");
  const { closeDb, openDb } = await import("../db/client");
  const { closeSender } = await import("../lib/jobs");
  openDb(); // an earlier seed may have closed the shared pool
  try {
    const { id, runs } = await ensureDemoComparison(demo.labId, demo.modelerId);
    console.log(`[seed] demo comparison #${id} queued (${runs?.length ?? 0} ensembles; the worker finishes them)`);
  } finally {
    await closeSender();
    await closeDb();
  }
}
