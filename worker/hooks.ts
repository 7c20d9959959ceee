import type { RunRow } from "../lib/data/runs";
import { afterComparisonRunFinished } from "./comparisons";
import { afterRunFinished } from "./notify";

/**
 * Called once when a run reaches a final state (succeeded, failed or cancelled by the worker).
 * The one place later features hang run-finished e-mail and the audit trail on.
 */
export async function onRunFinished(run: Pick<RunRow, "id" | "labId" | "status" | "error" | "createdBy">): Promise<void> {
  console.log(`run ${run.id} ${run.status}${run.error ? `: ${run.error}` : ""}`);
  // The run's result is stored whatever happens here; what is missed, the sweep catches up on.
  try {
    await afterRunFinished(run.id);
  } catch (e) {
    console.error(`[notify] run ${run.id}:`, e);
  }
  // A design run of a comparison: fail the comparison, or compute its noise table once all succeeded.
  try {
    await afterComparisonRunFinished(run.id);
  } catch (e) {
    console.error(`[comparison] run ${run.id}:`, e);
  }
}
