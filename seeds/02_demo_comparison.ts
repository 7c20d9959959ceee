import { findDemoModeler, hasComparison } from "../lib/data/demo";
import { withOpenPool } from "../lib/data/pool";

// The demo lab's comparison of four ring-timer designs (PRODUCT.md "Demo scenario"): queued
// through the normal launch path, so the worker finishes it soon after `npm start`. Only when
// the demo lab exists and holds no comparison yet; nothing outside the demo lab is touched.
export async function seed(): Promise<void> {
  await withOpenPool(async () => {
    const demo = await findDemoModeler();
    if (!demo) return;
    if (await hasComparison(demo.labId)) {
      console.log("[seed] demo comparison already present");
      return;
    }
    // Loaded here so the app's modules (and their queue client) start only when needed.
    const { ensureDemoComparison } = await import("../lib/demo/comparison");
    const { closeSender } = await import("../lib/jobs");
    try {
      const { id, runs } = await ensureDemoComparison(demo.labId, demo.modelerId);
      console.log(`[seed] demo comparison #${id} queued (${runs?.length ?? 0} ensembles; the worker finishes them)`);
    } finally {
      await closeSender();
    }
  });
}
