import { METHOD_LABEL, type RunJson, type RunStatus } from "@/lib/view/run-view";

import { StatusBadge } from "@/app/_components/status-badge";

/** A run's status as a small labelled badge. */
export function RunStatusBadge({ status }: { status: RunStatus }) {
  return <StatusBadge status={status} testId="run-status" />;
}

/** A thin progress bar (0..1) with an accessible name and value. */
export function RunProgressBar({ value, label, className = "" }: { value: number; label: string; className?: string }) {
  const pct = Math.round(Math.max(0, Math.min(1, value)) * 100);
  return (
    <div role="progressbar" aria-label={label} aria-valuemin={0} aria-valuemax={100} aria-valuenow={pct}
      className={`h-2 w-full overflow-hidden rounded-full bg-ink/10 ${className}`}>
      <div className="h-full rounded-full bg-ochre transition-[width] duration-500" style={{ width: `${pct}%` }} />
    </div>
  );
}

/** "Ensemble · direct Gillespie" / "Trace · deterministic ODE". */
export function runKindLabel(run: Pick<RunJson, "kind" | "method">): string {
  const m = METHOD_LABEL[run.method];
  return run.kind === "trace" ? "Trace · deterministic ODE" : `Ensemble · ${m[0].toLowerCase()}${m.slice(1)}`;
}

/** A timestamp in the reader's own time zone (the server's rendering may differ, hence no hydration warning). */
export function When({ iso }: { iso: string | null | undefined }) {
  if (!iso) return <>—</>;
  const d = new Date(iso);
  const text = d.toLocaleString("en-GB", { year: "numeric", month: "short", day: "numeric", hour: "2-digit", minute: "2-digit" });
  return <time dateTime={d.toISOString()} suppressHydrationWarning>{text}</time>;
}
