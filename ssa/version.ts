/**
 * Version of the simulation engine, stored with every run (bump when results would change).
 * 0.2.0: tau-leaping draws its Poisson numbers from tables (ssa/poisson.ts), so tau runs differ
 * from 0.1.0 for the same seed; direct-method runs are unchanged.
 */
export const ENGINE_VERSION = "burstwise-ssa/0.2.0";
