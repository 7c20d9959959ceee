import { createHash } from "node:crypto";

import { getDemoLab, hasDataset, insertDemoDataset } from "../lib/data/demo";
import { withOpenPool } from "../lib/data/pool";
import { datasetStats, parseDatasetCsv } from "../lib/view/datasets";

// An invented measurement for the demo lab (never real data): a flow-cytometry-like snapshot
// of the two-stage reporter's protein in 400 cells, in arbitrary fluorescence units.
export const DEMO_DATASET = { name: "Reporter snapshot (invented)", fileName: "reporter-snapshot.csv", moleculesPerUnit: 2.5 };

/** Gamma(k, θ) for integer k as a sum of k exponentials (textbook), from a fixed-seed LCG. */
function invented(n: number, mean: number, cv: number): number[] {
  let state = 20261215;
  // Numerical Recipes' 32-bit LCG (a = 1664525, c = 1013904223): fixed, so the demo never changes.
  const uniform = () => ((state = (Math.imul(state, 1664525) + 1013904223) >>> 0) + 0.5) / 2 ** 32;
  const k = Math.round(1 / (cv * cv));
  const theta = mean / k;
  return Array.from({ length: n }, () => {
    let x = 0;
    for (let i = 0; i < k; i++) x -= Math.log(uniform());
    return Math.round(x * theta * 10) / 10;
  });
}

/** Adds the invented snapshot to the demo lab once (the demo lab must exist). */
export async function seed(): Promise<void> {
  await withOpenPool(async () => {
    const lab = await getDemoLab();
    if (!lab) return;
    if (await hasDataset(lab.id, DEMO_DATASET.name)) return;
    // Mean 400 a.u. × 2.5 = 1,000 molecules, the two-stage reporter's stationary mean; a CV of
    // 0.15 is a little above its intrinsic 0.105, as extrinsic noise would make it.
    const csv = `gfp_au\n${invented(400, 400, 0.15).join("\n")}\n`;
    const { parsed, warnings } = parseDatasetCsv(csv, "snapshot");
    const bytes = Buffer.from(csv, "utf8");
    await insertDemoDataset({
      labId: lab.id, createdBy: lab.createdBy, name: DEMO_DATASET.name, kind: "snapshot",
      description: "Invented demo data: reporter fluorescence of single cells at steady state, calibrated at 2.5 molecules per a.u.",
      fileName: DEMO_DATASET.fileName, contentType: "text/csv", original: bytes, sha256: createHash("sha256").update(bytes).digest("hex"),
      units: { time_unit: null, amount_unit: "a.u.", molecules_per_unit: DEMO_DATASET.moleculesPerUnit },
      parsed, stats: { columns: datasetStats(parsed, DEMO_DATASET.moleculesPerUnit), warnings },
    });
    console.log(`[seed] demo dataset "${DEMO_DATASET.name}" loaded`);
  });
}
