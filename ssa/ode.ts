/**
 * Mean-field trace of a compiled circuit: dy/dt = Sᵀ·f(y) (SCIENCE.md "Deterministic model"),
 * integrated by ode-solvers.ts and sampled on the grid 0, dt, 2dt, …, tEnd. Pure: no I/O.
 */
import { makeGrid } from "./grid";
import { meanFieldJacobianEvaluator, type JacobianModel } from "./lna";
import type { Model } from "./model";
import { integrate, type IntegrateStats, type OdeMethod, type OdeRhs } from "./ode-solvers";

export { OdeError, integrate, type OdeMethod, type OdeRhs, type IntegrateOptions, type IntegrateStats } from "./ode-solvers";

/** The part of a compiled Model the deterministic code needs (and its schedule, when it has one). */
export type MeanFieldModel = Pick<Model, "species" | "nSpecies" | "nReactions" | "omega" | "initialAmounts" | "netStoich" | "rates"> & { schedule?: Model["schedule"] };

export interface SolveOdeOptions {
  /** End of the grid, in the model's time unit. */
  tEnd: number;
  /** Grid spacing, in the model's time unit. */
  dt: number;
  method?: OdeMethod;
  rtol?: number;
  atol?: number;
  /** "model" (default): model amounts; "molecules": amounts × Ω. */
  units?: "model" | "molecules";
  /** Start from these amounts (model units) instead of model.initialAmounts. */
  y0?: ArrayLike<number>;
  maxSteps?: number;
}

export interface OdeSolution {
  units: "model" | "molecules";
  species: string[];
  times: number[];
  /** Path of each species on the grid. */
  trace: Record<string, number[]>;
  /** Final state in model units (whatever `units` is). */
  final: Float64Array;
  stats: IntegrateStats;
}

/** The output grid: the same points as an ensemble's (ssa/grid.ts). */
export const outputGrid = makeGrid;

/** Right-hand side dy/dt = Sᵀ·f(y) of a model, in model amount per model time. */
export function meanFieldRhs(model: MeanFieldModel): OdeRhs {
  const nS = model.nSpecies;
  const nR = model.nReactions;
  const S = model.netStoich;
  // Sparse copy of the stoichiometry (reaction, species, change), so the RHS skips zeros.
  const rIdx: number[] = [];
  const sIdx: number[] = [];
  const delta: number[] = [];
  for (let r = 0; r < nR; r++) {
    for (let i = 0; i < nS; i++) {
      const v = S[r * nS + i];
      if (v !== 0) {
        rIdx.push(r);
        sIdx.push(i);
        delta.push(v);
      }
    }
  }
  const ri = Int32Array.from(rIdx);
  const si = Int32Array.from(sIdx);
  const dv = Float64Array.from(delta);
  const rates = new Float64Array(nR);
  return (y, dydt) => {
    model.rates(y, rates);
    dydt.fill(0);
    for (let p = 0; p < ri.length; p++) dydt[si[p]] += dv[p] * rates[ri[p]];
  };
}

/**
 * Integrates the mean field of `model` and samples it on the grid 0, dt, …, tEnd.
 * Dormand–Prince 5(4) by default, switching to RODAS4 when the problem turns out stiff
 * (`method: "auto"`); `dopri5` or `rosenbrock` force one method.
 * @throws RangeError for bad options; OdeError when the integration fails.
 */
export function solveOde(model: MeanFieldModel, options: SolveOdeOptions): OdeSolution {
  const units = options.units ?? "model";
  if (units !== "model" && units !== "molecules") throw new RangeError(`units must be "model" or "molecules", got ${String(units)}`);
  const grid = outputGrid(options.tEnd, options.dt);
  const y0 = options.y0 ?? model.initialAmounts;
  if (y0.length !== model.nSpecies) throw new RangeError(`y0 must have ${model.nSpecies} entries, got ${y0.length}`);
  const integrateOptions = { method: options.method, rtol: options.rtol, atol: options.atol, maxSteps: options.maxSteps };
  const { values, stats } = model.schedule
    ? integrateScheduled(model as Model, y0, grid, integrateOptions)
    : integrate(meanFieldRhs(model), y0, grid, { ...integrateOptions, jacobian: exactJacobian(model) });
  const nS = model.nSpecies;
  const scale = units === "molecules" ? model.omega : 1;
  const trace: Record<string, number[]> = {};
  model.species.forEach((id, i) => {
    const path = new Array<number>(grid.length);
    for (let k = 0; k < grid.length; k++) path[k] = values[k * nS + i] * scale;
    trace[id] = path;
  });
  const final = values.slice((grid.length - 1) * nS);
  return { units, species: model.species.slice(), times: Array.from(grid), trace, final, stats };
}

/** A compiled Model knows its rate laws, so the stiff method gets the exact Jacobian. */
function exactJacobian(model: MeanFieldModel) {
  return "law" in model && "expressions" in model ? meanFieldJacobianEvaluator(model as MeanFieldModel & JacobianModel) : undefined;
}

/**
 * The mean field of a model with a schedule, on `grid`: integrated phase by phase, each change a
 * hard stop where the species it sets jump to their new amounts and the next phase's rates take
 * over (right-continuous, as the stochastic kernels sample). The step counts add over phases.
 */
function integrateScheduled(model: Model, y0: ArrayLike<number>, grid: Float64Array, o: { method?: OdeMethod; rtol?: number; atol?: number; maxSteps?: number }): { values: Float64Array; stats: IntegrateStats } {
  const sch = model.schedule as NonNullable<Model["schedule"]>;
  const nS = model.nSpecies;
  const values = new Float64Array(grid.length * nS);
  const y = Float64Array.from(y0);
  let stats: IntegrateStats | null = null;
  let k = 0; // changes applied
  let t = grid[0];
  const applyUpTo = (time: number) => {
    while (k < sch.changes.length && sch.changes[k].at <= time) {
      const ch = sch.changes[k++];
      for (let p = 0; p < ch.species.length; p++) y[ch.species[p]] = ch.amounts[p];
    }
  };
  applyUpTo(t);
  let g = 0;
  while (g < grid.length) {
    // Grid points at the current time show the state now (after the changes at it).
    while (g < grid.length && grid[g] <= t) values.set(y, nS * g++);
    if (g === grid.length) break;
    const stop = k < sch.changes.length ? Math.min(sch.changes[k].at, grid[grid.length - 1]) : grid[grid.length - 1];
    const sub: number[] = [t];
    let h = g;
    while (h < grid.length && grid[h] < stop) sub.push(grid[h++]);
    sub.push(stop);
    const phase = sch.phases[k];
    const r = integrate(meanFieldRhs(phase), y, Float64Array.from(sub), { ...o, jacobian: exactJacobian(phase) });
    for (let q = 1; q < sub.length - 1; q++) values.set(r.values.subarray(q * nS, (q + 1) * nS), nS * g++);
    y.set(r.values.subarray((sub.length - 1) * nS));
    stats = stats ? addStats(stats, r.stats) : r.stats;
    t = stop;
    applyUpTo(t);
  }
  return { values, stats: stats ?? { method: "dopri5", switchedAt: null, steps: 0, rejected: 0, rhsEvaluations: 0, jacobians: 0 } };
}

/** Step counts of two pieces of one integration; method and switch time of the later piece that has them. */
function addStats(a: IntegrateStats, b: IntegrateStats): IntegrateStats {
  return {
    method: b.method,
    switchedAt: a.switchedAt ?? b.switchedAt,
    steps: a.steps + b.steps,
    rejected: a.rejected + b.rejected,
    rhsEvaluations: a.rhsEvaluations + b.rhsEvaluations,
    jacobians: a.jacobians + b.jacobians,
  };
}
