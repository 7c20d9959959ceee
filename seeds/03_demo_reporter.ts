import type { Knex } from "knex";

import { findDemoModeler } from "../lib/demo/modeler";

// The demo lab's constitutive reporter and its ensemble (PRODUCT.md "Demo scenario"), queued
// through the normal launch path so the worker finishes it soon after `npm start`. Only in the
// demo lab, and only once.
export async function seed(knex: Knex): Promise<void> {
  const demo = await findDemoModeler(knex);
  if (!demo) return;
  const have = await knex("circuits as c").join("circuit_versions as v", "v.circuit_id", "c.id").join("runs as r", "r.version_id", "v.id")
    .where({ "c.lab_id": demo.labId, "c.name": "Constitutive reporter (noise baseline)" }).first("r.id");
  if (have) {
    console.log("[seed] demo reporter already present");
    return;
  }
  // Loaded here so the app's modules (and their database pool and queue client) start only when needed.
  const { ensureDemoReporter } = await import("../lib/demo/reporter");
  const { closeDb, openDb } = await import("../db/client");
  const { closeSender } = await import("../lib/jobs");
  openDb(); // an earlier seed may have closed the shared pool
  try {
    const { runId } = await ensureDemoReporter(demo.labId, demo.modelerId);
    console.log(`[seed] demo reporter ensemble #${runId} queued (the worker finishes it)`);
  } finally {
    await closeSender();
    await closeDb();
  }
}
