import type { EngineWarning } from "@/ssa/warnings";

/**
 * The warnings that came with a result (ssa/warnings.ts), as a small list beside its numbers: the
 * message for people, the stable code for scripts and the README, and which number it concerns.
 * Renders nothing when there are none, so a clean result shows no empty box.
 */
export function WarningList({ warnings, title, testId }: { warnings: readonly EngineWarning[] | undefined; title: string; testId?: string }) {
  if (!warnings || warnings.length === 0) return null;
  return (
    <aside role="note" aria-label={title} data-testid={testId} className="rounded-md border border-ochre/40 bg-ochre-light/60 px-4 py-3 text-sm text-ink">
      <h2 className="font-semibold">{title}</h2>
      <ul className="mt-1 flex list-disc flex-col gap-1 pl-5">
        {warnings.map((w, i) => (
          <li key={`${w.code}-${i}`} data-code={w.code}>
            {w.message}
            <span className="ml-2 whitespace-nowrap text-xs text-ink-soft">
              <code>{w.code}</code>{w.field ? <> · about <code>{w.field}</code></> : null}
            </span>
          </li>
        ))}
      </ul>
    </aside>
  );
}

/** The warnings whose `field` names this entry (`sp`, or `<section>.sp` such as `stationary.sp`). */
export function warningsAbout(warnings: readonly EngineWarning[] | undefined, entry: string): EngineWarning[] {
  return (warnings ?? []).filter((w) => w.field === entry || (w.field !== undefined && w.field.endsWith(`.${entry}`)));
}

/** A small mark beside a number that a warning concerns; its title repeats the messages. */
export function WarningMark({ warnings }: { warnings: readonly EngineWarning[] }) {
  if (warnings.length === 0) return null;
  return (
    <span role="img" aria-label={`warning: ${warnings.map((w) => w.message).join("; ")}`} title={warnings.map((w) => `${w.code}: ${w.message}`).join("\n")} className="ml-1 cursor-help text-ochre-dark">
      ⚠
    </span>
  );
}
