import type { ComparisonStatus } from "@/lib/view/comparison-view";

import { StatusBadge } from "@/app/_components/status-badge";

/** A comparison's status as a small labelled badge. */
export function ComparisonStatusBadge({ status }: { status: ComparisonStatus }) {
  return <StatusBadge status={status} testId="comparison-status" />;
}
