/**
 * Kept for `cli bench`, which imports runSimulation from here: it is ssa/node/run-engine.ts
 * simulateRun. New code imports run-engine.ts.
 */
export { simulateRun as runSimulation } from "./run-engine";
