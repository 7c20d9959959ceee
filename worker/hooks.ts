import type { RunRow } from "../lib/data/runs";

/**
 * Called once when a run reaches a final state (succeeded, failed or cancelled by the worker).
 * The one place later features hang run-finished e-mail and the audit trail on.
 */
export async function onRunFinished(run: Pick<RunRow, "id" | "labId" | "status" | "error" | "createdBy">): Promise<void> {
  console.log(`run ${run.id} ${run.status}${run.error ? `: ${run.error}` : ""}`);
}
