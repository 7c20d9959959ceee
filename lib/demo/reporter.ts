// The demo lab's noise baseline (PRODUCT.md "Demo scenario", invented): the constitutive
// two-stage reporter and a finished 1,000-cell ensemble of it, queued through the normal launch
// path. Used by seeds/03_demo_reporter.ts.
import { readFileSync } from "node:fs";
import { join } from "node:path";

import { createCircuit, listCircuits } from "@/lib/data/circuits";
import { createRun } from "@/lib/runs";
import { parseCircuit } from "@/lib/schemas/circuit";
import { RunLaunch } from "@/lib/schemas/run-options";
import type { Circuit } from "@/ssa/types";

export const DEMO_REPORTER_NAME = "Constitutive reporter (noise baseline)";

/** The reporter circuit: examples/two-stage-reporter.circuit.json under the demo's name. */
export function demoReporter(root = process.cwd()): Circuit {
  const base = JSON.parse(readFileSync(join(root, "examples/two-stage-reporter.circuit.json"), "utf8")) as Circuit;
  return parseCircuit({
    ...base, name: DEMO_REPORTER_NAME,
    description: "Always-on promoter driving the timer's reporter: mRNA made at km and lost at gm, protein made at kp per mRNA and lost at gp. The noise floor every timer design is compared with.",
  });
}

/**
 * Creates the reporter circuit (once) and queues its 1,000-cell ensemble as `userId`.
 * Protein lifetime 1/gp = 50 min, so 1,200 min with the first 300 dropped is well settled.
 */
export async function ensureDemoReporter(labId: string, userId: string): Promise<{ versionId: string; runId: string }> {
  const have = (await listCircuits(labId)).find((c) => c.name === DEMO_REPORTER_NAME);
  const versionId = have ? have.latestVersionId : (await createCircuit(labId, userId, demoReporter())).versionId;
  const run = await createRun(userId, RunLaunch.parse({ version_id: versionId, method: "ssa", t_end: 1200, dt: 2, runs: 1000, burn_in: 300, seed: 20261201 }));
  return { versionId, runId: run.id };
}
