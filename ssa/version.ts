/**
 * Version of the simulation engine, stored with every run (bump when results would change).
 * 0.2.0: tau-leaping draws its Poisson numbers from tables (ssa/poisson.ts) and takes a leap
 * tolerance ε (default 0.05), so tau runs differ from 0.1.0 for the same seed; direct-method and
 * mean-field results are unchanged.
 */
export const ENGINE_VERSION = "burstwise-ssa/0.2.0";

/** Earlier versions whose results this engine reproduces exactly, per method. */
const SAME_RESULTS: Record<string, readonly ("ode" | "ssa" | "tau")[]> = {
  "burstwise-ssa/0.1.0": ["ode", "ssa"],
};

/**
 * Whether this engine reproduces, for `method`, what the engine `recorded` computed (a run's
 * chunks, a replayed cell): always for the same version, and for earlier versions whose
 * change left that method alone.
 */
export function reproducesResultsOf(recorded: string, method: "ode" | "ssa" | "tau"): boolean {
  return recorded === ENGINE_VERSION || (SAME_RESULTS[recorded]?.includes(method) ?? false);
}
