import type { ComparisonStatus } from "@/lib/comparison-view";

const STYLE: Record<ComparisonStatus, string> = {
  draft: "bg-white text-ink-soft border-ink/25 border-dashed",
  running: "bg-ochre-light text-ochre-dark border-ochre/40",
  succeeded: "bg-moss-light text-moss border-moss/30",
  failed: "bg-red-50 text-red-800 border-red-300",
  cancelled: "bg-ink/5 text-ink-soft border-ink/20 line-through decoration-ink/40",
};

/** A comparison's status as a small labelled badge. */
export function ComparisonStatusBadge({ status }: { status: ComparisonStatus }) {
  return (
    <span data-testid="comparison-status" className={`inline-flex items-center rounded-full border px-2 py-0.5 text-xs font-medium ${STYLE[status]}`}>
      {status}
    </span>
  );
}
