/**
 * Version of the simulation engine, stored with every run (bump when results would change).
 * 0.2.0: tau-leaping draws its Poisson numbers from tables (ssa/poisson.ts) and takes a leap
 * tolerance ε (default 0.05), so tau runs differ from 0.1.0 for the same seed; direct-method and
 * mean-field results are unchanged.
 * 0.3.0: summaries change (issue 12): the default burn-in comes from the circuit's relaxation time,
 * the oscillation verdict from the averaged autocorrelation, and chunks carry the sums behind both
 * (lag and half-window sums). Cells are drawn exactly as by 0.2.0.
 * 0.4.0: the direct method steps its per-cell state (same ARC4 key, ssa/rng.ts) by xoshiro128+
 * instead of Tyche-i, and takes the waiting time's −ln u from a table (exponentialOfWord) instead
 * of Math.log: every ssa cell differs from 0.3.0 for the same seed. Tau-leaping, the bootstrap
 * and the mean field are unchanged.
 */
export const ENGINE_VERSION = "burstwise-ssa/0.4.0";

type Method = "ode" | "ssa" | "tau";

/**
 * Earlier versions whose run results (chunks and summaries) this engine reproduces exactly, per
 * method: ode and tau for 0.3.0 (0.4.0 changed only the direct method's stream); none before,
 * since 0.3.0 sums other statistics per chunk and chooses another default window.
 */
const SAME_RESULTS: Record<string, readonly Method[]> = {
  "burstwise-ssa/0.3.0": ["ode", "tau"],
};

/** Earlier versions whose single cells this engine draws identically, per method (cell replay). */
const SAME_CELLS: Record<string, readonly Method[]> = {
  // 0.4.0 draws direct-method (ssa) cells from another stream; tau cells as 0.2.0 and 0.3.0 did.
  "burstwise-ssa/0.1.0": ["ode"],
  "burstwise-ssa/0.2.0": ["ode", "tau"],
  "burstwise-ssa/0.3.0": ["ode", "tau"],
};

/**
 * Whether this engine reproduces, for `method`, what the engine `recorded` computed (a run's
 * chunks, a replayed cell): always for the same version, and for earlier versions whose
 * change left that method alone.
 */
export function reproducesResultsOf(recorded: string, method: Method): boolean {
  return recorded === ENGINE_VERSION || (SAME_RESULTS[recorded]?.includes(method) ?? false);
}

/** Whether this engine replays, for `method`, exactly the cells the engine `recorded` drew. */
export function reproducesCellsOf(recorded: string, method: Method): boolean {
  return recorded === ENGINE_VERSION || (SAME_CELLS[recorded]?.includes(method) ?? false);
}
