/**
 * What a run reports about a circuit's schedule: the changes that fired within [0, t_end] (time,
 * and what each set, in model units), and the caveats that come with them: a change after the
 * burn-in mixes two regimes into the stationary statistics, and one after t_end never fires.
 * Pure: no I/O.
 */
import type { Model } from "./model-core";
import { makeWarning, type EngineWarning } from "./warnings";

/** Why tau-leaping refuses a circuit with a schedule (the kernel, the run route and the CLI say the same). */
export const TAU_SCHEDULE_REFUSAL = `method: tau-leaping does not run a circuit with a schedule yet; use "ssa" or "ode"`;

/** One change as a result reports it: its time and what it set (species amounts and parameter values, model units). */
export interface FiredChange {
  at: number;
  set: Record<string, number>;
}

export function scheduleReport(m: Model, o: { tEnd: number; burnIn: number }): { fired: FiredChange[]; warnings: EngineWarning[] } {
  const fired: FiredChange[] = [];
  const warnings: EngineWarning[] = [];
  if (!m.schedule) return { fired, warnings };
  const unit = m.timeUnit;
  m.schedule.changes.forEach((ch, k) => {
    if (ch.at > o.tEnd) {
      warnings.push(makeWarning("schedule-after-end", `schedule[${k}]: the change at ${ch.at} ${unit} lies after t_end = ${o.tEnd} ${unit} and never fires; raise t_end to see it.`, `schedule[${k}].at`));
      return;
    }
    const set: Record<string, number> = {};
    for (let p = 0; p < ch.species.length; p++) set[m.species[ch.species[p]]] = ch.amounts[p];
    Object.assign(set, ch.parameters);
    fired.push({ at: ch.at, set });
  });
  const late = fired.filter((f) => f.at > o.burnIn);
  if (late.length > 0) {
    warnings.push(
      makeWarning(
        "schedule-after-burn-in",
        `schedule: ${late.length === 1 ? "the change" : `${late.length} changes`} at ${late.map((f) => f.at).join(", ")} ${unit} ${late.length === 1 ? "falls" : "fall"} after burn-in ${o.burnIn} ${unit}, so the stationary statistics and periods pool samples from before and after ${late.length === 1 ? "it" : "them"}; read the mean and quantile paths, or set burn_in after the last change.`,
        "schedule",
      ),
    );
  }
  return { fired, warnings };
}
