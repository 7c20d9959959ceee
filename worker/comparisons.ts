// Comparisons in the worker: when a run ends, its comparison (if any) is brought up to date:
// a failed design run fails it, the last successful one computes the noise table; then the
// lab's opted-in members get one e-mail about the comparison.
import { getComparison, getComparisonIdOfRun } from "../lib/data/comparisons";
import { refreshComparison } from "../lib/comparisons";
import { notifyFinished } from "./notify";

/** Called once a run has reached a final state (worker/hooks.ts). Safe to call again. */
export async function afterComparisonRunFinished(runId: string): Promise<void> {
  const id = await getComparisonIdOfRun(runId);
  if (id) await finishComparison(id);
}

/**
 * Brings comparison `id` up to date with its runs (computing its results when they all
 * succeeded) and mails the lab when it ended. For the run-finished hook and for the job a read
 * queues when that hook was missed. Safe to call again.
 */
export async function finishComparison(id: string): Promise<void> {
  const status = await refreshComparison(id);
  if (status !== "succeeded" && status !== "failed") return;
  const c = await getComparison(id);
  if (!c) return;
  console.log(`comparison ${id} ${c.status}${c.error ? `: ${c.error}` : ""}`);
  await notifyFinished({
    kind: "comparison", id, labId: c.labId, ownerId: c.createdBy, status: c.status as "succeeded" | "failed", error: c.error,
    title: `#${id} (${c.name})`, path: `/labs/${c.labId}/comparisons/${id}`,
  });
}
