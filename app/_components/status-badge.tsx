import type { ComparisonStatus } from "@/lib/view/comparison-view";
import type { RunStatus } from "@/lib/view/run-view";

/** Colours of every status a run or a comparison can have (one palette, so the two read alike). */
const STYLE: Record<RunStatus | ComparisonStatus, string> = {
  draft: "bg-white text-ink-soft border-ink/25 border-dashed",
  queued: "bg-ink/5 text-ink-soft border-ink/20",
  running: "bg-ochre-light text-ochre-dark border-ochre/40",
  succeeded: "bg-moss-light text-moss border-moss/30",
  failed: "bg-red-50 text-red-800 border-red-300",
  cancelled: "bg-ink/5 text-ink-soft border-ink/20 line-through decoration-ink/40",
};

/** A status as a small labelled badge; `testId` tells a run's from a comparison's in tests. */
export function StatusBadge({ status, testId }: { status: RunStatus | ComparisonStatus; testId: "run-status" | "comparison-status" }) {
  return (
    <span data-testid={testId} className={`inline-flex items-center rounded-full border px-2 py-0.5 text-xs font-medium ${STYLE[status]}`}>
      {status}
    </span>
  );
}
