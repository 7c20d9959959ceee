// The demo lab's comparison (PRODUCT.md "Demo scenario", invented): four designs of the ring
// timer, as four circuits, run as one comparison through the normal launch path, so the
// worker finishes it like any other. Used by seeds/02_demo_comparison.ts.
import { readFileSync } from "node:fs";
import { join } from "node:path";

import { createComparison } from "@/lib/comparisons";
import { createCircuit, listCircuits } from "@/lib/data/circuits";
import { parseCircuit } from "@/lib/schemas/circuit";
import { ComparisonCreate } from "@/lib/schemas/comparisons";
import type { Circuit } from "@/ssa/types";

export const DEMO_COMPARISON_NAME = "Ring timer: which design keeps time best?";

/** The four designs: name, what changed and how, from examples/ring-timer.circuit.json. */
export function demoDesigns(root = process.cwd()): { label: string; circuit: Circuit }[] {
  const base = JSON.parse(readFileSync(join(root, "examples/ring-timer.circuit.json"), "utf8")) as Circuit;
  const variant = (name: string, description: string, change: (c: Circuit) => Circuit) =>
    parseCircuit(change({ ...structuredClone(base), name, description }));
  return [
    { label: "Baseline (n = 4)", circuit: variant("Ring timer, baseline", "Three-gene ring timer: A activates B, B activates C, C represses A; 1 fL.", (c) => c) },
    {
      label: "Higher cooperativity (n = 6)",
      circuit: variant("Ring timer, higher cooperativity", "Baseline with Hill exponent 6 instead of 4 at every promoter.", (c) => ({ ...c, parameters: { ...c.parameters, n: 6 } })),
    },
    {
      label: "Stronger degradation tag (g = 0.3/min)",
      circuit: variant("Ring timer, stronger degradation tag", "Baseline with a stronger degradation tag: loss rate 0.3/min instead of 0.2/min for all three proteins.", (c) => ({ ...c, parameters: { ...c.parameters, g: 0.3 } })),
    },
    {
      label: "5× molecules (5 fL)",
      circuit: variant("Ring timer, five-fold molecules", "Baseline in a 5 fL cell: the same concentrations, five times the molecules.", (c) => ({ ...c, volume_fL: 5 * (c.volume_fL ?? 1) })),
    },
  ];
}

/** Settings of the demo's ensembles: 500 cells each, 1,000 min on a 1-min grid, the first 200 min dropped. */
export const DEMO_SETTINGS = { method: "ssa" as const, t_end: 1000, dt: 1, runs: 500, burn_in: 200, seed: 20261220, common_seed: true };

/**
 * Creates the four ring-timer circuits (reusing any of that name already in the lab) and the
 * comparison of their period spread, launched as `userId` (a modeler of the lab).
 * @throws what createComparison throws (role, queue limit).
 */
export async function ensureDemoComparison(labId: string, userId: string): Promise<{ id: string; runs: string[] | null }> {
  const existing = await listCircuits(labId);
  const designs: { label: string; version_id: string }[] = [];
  for (const d of demoDesigns()) {
    const have = existing.find((c) => c.name === d.circuit.name);
    const versionId = have ? have.latestVersionId : (await createCircuit(labId, userId, d.circuit)).versionId;
    designs.push({ label: d.label, version_id: versionId });
  }
  const body = ComparisonCreate.parse({
    lab_id: labId, name: DEMO_COMPARISON_NAME,
    description: "Period spread of four ring-timer designs: baseline, higher cooperativity, a stronger degradation tag, and five-fold more molecules at the same concentrations. Same settings and seed for all four.",
    designs, settings: DEMO_SETTINGS, launch: true,
  });
  const { id, runs } = await createComparison(userId, body);
  return { id, runs };
}
