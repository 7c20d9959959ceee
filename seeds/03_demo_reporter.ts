import { findDemoModeler, hasRunOfCircuit } from "../lib/data/demo";
import { withOpenPool } from "../lib/data/pool";

// The demo lab's constitutive reporter and its ensemble (PRODUCT.md "Demo scenario"), queued
// through the normal launch path so the worker finishes it soon after `npm start`. Only in the
// demo lab, and only once.
export async function seed(): Promise<void> {
  await withOpenPool(async () => {
    const demo = await findDemoModeler();
    if (!demo) return;
    if (await hasRunOfCircuit(demo.labId, "Constitutive reporter (noise baseline)")) {
      console.log("[seed] demo reporter already present");
      return;
    }
    // Loaded here so the app's modules (and their queue client) start only when needed.
    const { ensureDemoReporter } = await import("../lib/demo/reporter");
    const { closeSender } = await import("../lib/jobs");
    try {
      const { runId } = await ensureDemoReporter(demo.labId, demo.modelerId);
      console.log(`[seed] demo reporter ensemble #${runId} queued (the worker finishes it)`);
    } finally {
      await closeSender();
    }
  });
}
