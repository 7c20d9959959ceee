/**
 * Expected reaction events of one cell of a run, before it is launched (lib/view/run-cost.ts prices a
 * run with it; the server computes it on the engine pool, ssa/node/engine-task.ts). Events of
 * one cell ≈ ∫₀ᵀ a₀(Ω·y(t)) dt, the total propensity along the mean-field path y(t) (a Gillespie
 * cell fires events at rate a₀(x), so its expected count is ∫ E[a₀(x(t))] dt; the mean field
 * replaces E[a₀(x)] by a₀(E[x]), exact for zeroth- and first-order reactions and an
 * approximation for Hill and higher-order laws). Pure: no I/O.
 */
import { compileModel, timeDependenceRefusal } from "./model";
import { solveOde } from "./ode";
import { ModelInputError, type Circuit } from "./types";

/** Most grid points the estimate integrates over (a coarser grid than the run's keeps it fast). */
const MAX_ESTIMATE_POINTS = 2000;

export interface ExpectedEventsInput {
  /** Model time units. */
  tEnd: number;
  overrides?: Record<string, number>;
  /** Largest species × reactions for which the mean-field path is integrated; above it, the initial state. */
  maxOdeSize?: number;
  /** Most solver steps of that integration (default 200,000); past it, the initial state too. */
  maxOdeSteps?: number;
  /** Skip the integration: the propensity at the initial counts × t_end. */
  initialOnly?: boolean;
}

export interface ExpectedEvents {
  /** Expected reaction events of one cell; +Infinity when the estimate is not finite. */
  eventsPerCell: number;
  basis: "mean-field path" | "initial state";
}

/** Σⱼ aⱼ(x): total propensity at molecule counts x, per model time unit. */
function sumPropensities(model: ReturnType<typeof compileModel>, x: Float64Array, a: Float64Array): number {
  model.propensities(x, a);
  let a0 = 0;
  for (let j = 0; j < a.length; j++) a0 += a[j]!;
  return a0;
}

/**
 * Integrates the total propensity along the mean-field path by the trapezoidal rule on at most
 * 2000 points; when the ODE cannot be solved (or may not be, by the input's bounds) it falls back
 * to the propensity at the initial counts × t_end, and says so in `basis`.
 * @throws ModelInputError (from compileModel) when an override is unknown or breaks a bound, or
 *   when a rate reads the time (no stochastic run of it is possible).
 */
export function estimateEventsPerCell(circuit: Circuit, input: ExpectedEventsInput): ExpectedEvents {
  const model = compileModel(circuit, input.overrides);
  // Events are a stochastic run's; one that would be refused (a rate reading t) says so here, where the launcher shows it.
  const refusal = timeDependenceRefusal(model);
  if (refusal) throw new ModelInputError(refusal);
  const a = new Float64Array(model.nReactions);
  let eventsPerCell: number;
  let basis: ExpectedEvents["basis"] = "mean-field path";
  try {
    if (input.initialOnly) throw new RangeError("the initial state was asked for");
    if (input.maxOdeSize !== undefined && model.nSpecies * model.nReactions > input.maxOdeSize) throw new RangeError("too large to integrate here");
    const sol = solveOde(model, { tEnd: input.tEnd, dt: input.tEnd / MAX_ESTIMATE_POINTS, units: "molecules", maxSteps: input.maxOdeSteps ?? 200_000 });
    const x = new Float64Array(model.nSpecies);
    let prev = 0;
    let sum = 0;
    sol.times.forEach((t, g) => {
      model.species.forEach((id, i) => (x[i] = Math.max(0, sol.trace[id]![g]!)));
      const a0 = sumPropensities(model, x, a);
      if (g > 0) sum += 0.5 * (a0 + prev) * (t - sol.times[g - 1]!);
      prev = a0;
    });
    eventsPerCell = sum;
  } catch {
    basis = "initial state";
    eventsPerCell = sumPropensities(model, Float64Array.from(model.initialCounts), a) * input.tEnd;
  }
  if (!Number.isFinite(eventsPerCell) || eventsPerCell < 0) eventsPerCell = Number.POSITIVE_INFINITY;
  return { eventsPerCell, basis };
}
