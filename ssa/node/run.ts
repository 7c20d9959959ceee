/**
 * Runs for the app and the background worker: `runSimulation` (ssa/node/run-lazy.ts) and a
 * synchronous `runTrajectory` that compiles with the formula parser. Node only.
 */
import { compileModel } from "../model";
import type { TrajectoryResult } from "../ensemble";
import type { Circuit } from "../types";
import { trajectoryOf, type RunOptions } from "./run-lazy";

export { runSimulation, runTrajectoryLazily, type RunOptions } from "./run-lazy";

/** `trajectory`: cell `index` of the ensemble drawn with `seed`, replayed alone. @throws RangeError for method "ode". */
export function runTrajectory(circuit: Circuit, o: RunOptions & { seed: number; index: number }): TrajectoryResult {
  if (o.method === "ode") throw new RangeError(`method must be "ssa" or "tau" for a trajectory`);
  return trajectoryOf(compileModel(circuit, o.overrides), o);
}
