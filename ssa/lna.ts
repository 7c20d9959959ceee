/**
 * Jacobian of the mean field and the linear noise approximation (LNA) at a steady state.
 * Derivatives of the rate laws are exact: closed forms for mass action and Hill laws, forward-mode
 * automatic differentiation (dual numbers) over the parsed `expression` AST. A piecewise formula's
 * derivative is that of its active piece (the piece whose condition holds at y; the one-sided
 * derivative on the side the conditions choose, as for min and max): right everywhere but on a
 * switch, where the rate is not differentiable; `switchingCondition` finds a state sitting on one,
 * and ssa/analyze.ts refuses stability and the LNA there. Pure: no I/O.
 */
import { exprChildren, expressionSpecies, type Expr } from "./expr-ast";
import { conservationAnalysis, lyapunov, type Conservation } from "./linalg";
import { LawCode, powNonNeg, type Model } from "./model-core";

/** The part of a compiled Model the Jacobian needs. */
export type JacobianModel = Pick<
  Model,
  | "nSpecies" | "nReactions" | "netStoich" | "rates" | "law" | "k" | "reactantPtr" | "reactantIdx" | "reactantNu"
  | "hillInput" | "vmax" | "K" | "n" | "expressions" | "speciesIndex" | "parameters"
> & Partial<Pick<Model, "timeReactions">>;

/**
 * ∂f_r/∂y_i of every rate law at amounts y (model units), dense row-major nReactions × nSpecies.
 * Mass action k·Π y^ν: k·ν_i·y_i^(ν_i−1)·Π_{j≠i} y_j^ν_j. Hill: d/dx [x^n/(K^n+x^n)] =
 * (n/K)·(x/K)^(n−1)/(1+(x/K)^n)²; repression is its negative. Expressions: dual numbers.
 */
export function rateJacobian(model: JacobianModel, y: Float64Array, t = 0): Float64Array {
  const out = new Float64Array(model.nReactions * model.nSpecies);
  rateJacobianInto(model, y, out, new Map(Object.entries(model.parameters)), t);
  return out;
}

/** ∂f_r/∂t of every rate law at amounts y and time t (non-zero only for formulas that read `t`), length nReactions. */
export function rateTimeDerivative(model: JacobianModel, y: Float64Array, t: number, out: Float64Array, paramMap: ReadonlyMap<string, number> = new Map(Object.entries(model.parameters))): void {
  out.fill(0);
  for (const r of model.timeReactions ?? []) out[r] = dual(model.expressions[r] as Expr, y, t, TIME_DIRECTION, model.speciesIndex, paramMap)[1];
}

/**
 * The first piecewise condition of a rate that sits on its switch at amounts y (a relation whose
 * sides agree to 1e-6 relative: there the rate jumps or kinks, and no derivative describes it), as
 * `reactions[r].rate.expression` and the species it reads; null when none does.
 */
export function switchingCondition(model: JacobianModel, y: Float64Array, t = 0): { field: string; at: string } | null {
  const params = new Map(Object.entries(model.parameters));
  for (let r = 0; r < model.nReactions; r++) {
    const e = model.expressions[r];
    if (!e) continue;
    const hit = findSwitch(e, y, t, model.speciesIndex, params);
    if (hit) return { field: `reactions[${r}].rate.expression`, at: hit };
  }
  return null;
}

function findSwitch(e: Expr, y: Float64Array, t: number, idx: ReadonlyMap<string, number>, params: ReadonlyMap<string, number>): string | null {
  if (e.kind === "cmp") {
    const l = dual(e.left, y, t, -2, idx, params)[0];
    const r = dual(e.right, y, t, -2, idx, params)[0];
    const species = expressionSpecies(e);
    if (species.length > 0 && Math.abs(l - r) <= 1e-6 * Math.max(1, Math.abs(l), Math.abs(r))) {
      return species.map((id) => `${id} = ${Number((y[idx.get(id) as number]).toPrecision(6))}`).join(", ");
    }
  }
  for (const c of exprChildren(e)) {
    const hit = findSwitch(c, y, t, idx, params);
    if (hit) return hit;
  }
  return null;
}

/** The `dir` of dual() that differentiates along time. */
const TIME_DIRECTION = -1;

/** rateJacobian writing into `out` (overwritten), with the parameter map supplied by the caller. */
function rateJacobianInto(model: JacobianModel, y: Float64Array, out: Float64Array, paramMap: ReadonlyMap<string, number>, t: number): void {
  const nS = model.nSpecies;
  const nR = model.nReactions;
  out.fill(0);
  for (let r = 0; r < nR; r++) {
    const law = model.law[r];
    if (law === LawCode.MassAction) {
      const p0 = model.reactantPtr[r];
      const p1 = model.reactantPtr[r + 1];
      for (let p = p0; p < p1; p++) {
        const i = model.reactantIdx[p];
        const nu = model.reactantNu[p];
        let v = model.k[r] * nu * powNonNeg(y[i], nu - 1);
        for (let q = p0; q < p1; q++) if (q !== p) v *= powNonNeg(y[model.reactantIdx[q]], model.reactantNu[q]);
        out[r * nS + i] += v;
      }
    } else if (law === LawCode.HillActivation || law === LawCode.HillRepression) {
      const i = model.hillInput[r];
      const x = y[i];
      if (x < 0) continue; // rates() clamps the input at 0, so the rate is flat there
      const K = model.K[r];
      const n = model.n[r];
      const u = x / K;
      const ratio = powNonNeg(u, n);
      let d: number;
      if (u === 0) d = n === 1 ? 1 / K : n > 1 ? 0 : Infinity;
      else d = (n / K) * powNonNeg(u, n - 1) / ((1 + ratio) * (1 + ratio));
      if (!Number.isFinite(ratio)) d = 0;
      out[r * nS + i] = (law === LawCode.HillActivation ? 1 : -1) * model.vmax[r] * d;
    } else {
      const expr = model.expressions[r] as Expr;
      for (let i = 0; i < nS; i++) out[r * nS + i] = dual(expr, y, t, i, model.speciesIndex, paramMap)[1];
    }
  }
}

/**
 * Value and derivative along species `dir` (TIME_DIRECTION: along time; any other negative: none)
 * of an expression at amounts y and time t (forward-mode AD).
 */
function dual(e: Expr, y: Float64Array, t: number, dir: number, idx: ReadonlyMap<string, number>, params: ReadonlyMap<string, number>): [number, number] {
  switch (e.kind) {
    case "time":
      return [t, dir === TIME_DIRECTION ? 1 : 0];
    case "piecewise": {
      // The active piece's value and derivative (see the header).
      for (const p of e.pieces) if (truth(p.cond, y, t, idx, params)) return dual(p.value, y, t, dir, idx, params);
      return e.otherwise ? dual(e.otherwise, y, t, dir, idx, params) : [NaN, NaN];
    }
    case "num":
      return [e.value, 0];
    case "param":
      return [params.get(e.id) as number, 0];
    case "species": {
      const i = idx.get(e.id) as number;
      return [y[i], i === dir ? 1 : 0];
    }
    case "neg": {
      const [v, d] = dual(e.arg, y, t, dir, idx, params);
      return [-v, -d];
    }
    case "bin": {
      const [a, da] = dual(e.left, y, t, dir, idx, params);
      const [b, db] = dual(e.right, y, t, dir, idx, params);
      switch (e.op) {
        case "+":
          return [a + b, da + db];
        case "-":
          return [a - b, da - db];
        case "*":
          return [a * b, da * b + a * db];
        case "/":
          return [a / b, (da * b - a * db) / (b * b)];
        case "^":
          return powDual(a, da, b, db);
      }
      break;
    }
    case "call": {
      const args = e.args.map((x) => dual(x, y, t, dir, idx, params));
      switch (e.fn) {
        case "exp": {
          const v = Math.exp(args[0][0]);
          return [v, v * args[0][1]];
        }
        case "log":
          return [Math.log(args[0][0]), args[0][1] / args[0][0]];
        case "sqrt": {
          const v = Math.sqrt(args[0][0]);
          return [v, args[0][1] === 0 ? 0 : args[0][1] / (2 * v)];
        }
        case "pow":
          return powDual(args[0][0], args[0][1], args[1][0], args[1][1]);
        case "min":
        case "max": {
          // The derivative of the selected argument (a one-sided derivative at ties).
          let best = args[0];
          for (let k = 1; k < args.length; k++) {
            if (e.fn === "min" ? args[k][0] < best[0] : args[k][0] > best[0]) best = args[k];
          }
          return [best[0], best[1]];
        }
      }
    }
  }
  throw new TypeError(`rateJacobian: unexpected expression node ${JSON.stringify(e)}`);
}

/** The truth of a condition at amounts y and time t (values from dual(), so the same arithmetic as the rates). */
function truth(e: Expr, y: Float64Array, t: number, idx: ReadonlyMap<string, number>, params: ReadonlyMap<string, number>): boolean {
  switch (e.kind) {
    case "bool":
      return e.value;
    case "not":
      return !truth(e.arg, y, t, idx, params);
    case "logic": {
      const l = truth(e.left, y, t, idx, params);
      const r = truth(e.right, y, t, idx, params);
      return e.op === "and" ? l && r : e.op === "or" ? l || r : l !== r;
    }
    case "cmp": {
      const l = dual(e.left, y, t, -2, idx, params)[0];
      const r = dual(e.right, y, t, -2, idx, params)[0];
      switch (e.op) {
        case "<":
          return l < r;
        case "<=":
          return l <= r;
        case ">":
          return l > r;
        case ">=":
          return l >= r;
        case "==":
          return l === r;
        case "!=":
          return l !== r;
      }
    }
  }
  throw new TypeError(`rateJacobian: unexpected condition node ${JSON.stringify(e)}`);
}

function powDual(a: number, da: number, b: number, db: number): [number, number] {
  const v = Math.pow(a, b);
  // d(a^b) = b·a^(b−1)·da + a^b·ln(a)·db; the second term vanishes when b is constant.
  let d = da === 0 ? 0 : b * Math.pow(a, b - 1) * da;
  if (db !== 0) d += v * Math.log(a) * db;
  return [v, d];
}

/** J = S·∂f/∂y (nSpecies × nSpecies, row-major), the Jacobian of dy/dt = Sᵀf(y) in 1/time. */
export function meanFieldJacobian(model: JacobianModel, y: Float64Array): Float64Array {
  const J = new Float64Array(model.nSpecies * model.nSpecies);
  meanFieldJacobianEvaluator(model)(y, J);
  return J;
}

/**
 * A reusable J = S·∂f/∂y evaluator that writes into `out` (nSpecies × nSpecies) and allocates
 * nothing per call, for the stiff ODE solver.
 */
export function meanFieldJacobianEvaluator(model: JacobianModel): (y: Float64Array, out: Float64Array, t?: number) => void {
  const nS = model.nSpecies;
  const nR = model.nReactions;
  const df = new Float64Array(nR * nS);
  const paramMap = new Map(Object.entries(model.parameters));
  const rIdx: number[] = [];
  const sIdx: number[] = [];
  const coef: number[] = [];
  for (let r = 0; r < nR; r++) {
    for (let i = 0; i < nS; i++) {
      const v = model.netStoich[r * nS + i];
      if (v !== 0) {
        rIdx.push(r);
        sIdx.push(i);
        coef.push(v);
      }
    }
  }
  return (y, out, t = 0) => {
    rateJacobianInto(model, y, df, paramMap, t);
    out.fill(0);
    for (let p = 0; p < rIdx.length; p++) {
      const r = rIdx[p];
      const i = sIdx[p];
      const c = coef[p];
      for (let j = 0; j < nS; j++) out[i * nS + j] += c * df[r * nS + j];
    }
  };
}

/** Species × reactions stoichiometry S (row-major) from a model's reactions × species netStoich. */
export function speciesByReaction(model: Pick<Model, "nSpecies" | "nReactions" | "netStoich">): Float64Array {
  const nS = model.nSpecies;
  const nR = model.nReactions;
  const s = new Float64Array(nS * nR);
  for (let r = 0; r < nR; r++) for (let i = 0; i < nS; i++) s[i * nR + r] = model.netStoich[r * nS + i];
  return s;
}

/** Conservation laws of a model's network (see conservationAnalysis). */
export function modelConservation(model: Pick<Model, "nSpecies" | "nReactions" | "netStoich">): Conservation {
  return conservationAnalysis(speciesByReaction(model), model.nSpecies, model.nReactions);
}

/**
 * Reduced Jacobian J_r = J[I,:]·L with L = [I; L0] mapping independent species to all species
 * (Reder 1988): the dynamics on the stoichiometric subspace, without the zero eigenvalues that
 * conserved moieties add. r × r, row-major, in the order of `cons.independent`.
 */
export function reducedJacobian(J: Float64Array, nS: number, cons: Conservation): Float64Array {
  const I = cons.independent;
  const D = cons.dependent;
  const r = I.length;
  const Jr = new Float64Array(r * r);
  for (let a = 0; a < r; a++) {
    const row = I[a];
    for (let b = 0; b < r; b++) {
      let v = J[row * nS + I[b]];
      for (let d = 0; d < D.length; d++) v += J[row * nS + D[d]] * cons.link[d * r + b];
      Jr[a * r + b] = v;
    }
  }
  return Jr;
}

export interface LnaResult {
  /** Covariance of molecule counts, nSpecies × nSpecies, row-major (molecules²). */
  covariance: Float64Array;
  /** Steady state in molecules. */
  mean: Float64Array;
}

/**
 * Linear noise approximation at a stable steady state y* (model units): Σ solves
 * A·Σ + Σ·Aᵀ + D = 0 with A the Jacobian and D = S·diag(Ω·f(y*))·Sᵀ, both in molecules
 * (van Kampen; Elf & Ehrenberg 2003, Genome Res 13:2475). Solved on the independent species
 * and mapped back with the link matrix, so conserved totals have zero variance, as in the
 * stochastic model where they are exact. Exact for networks with linear propensities.
 * @throws RangeError when the reduced Jacobian is not stable (the Lyapunov equation has no
 *   positive solution).
 */
export function linearNoise(model: JacobianModel & Pick<Model, "omega">, yStar: Float64Array, cons: Conservation = modelConservation(model)): LnaResult {
  const nS = model.nSpecies;
  const nR = model.nReactions;
  const omega = model.omega;
  const f = new Float64Array(nR);
  model.rates(yStar, f);
  const I = cons.independent;
  const D = cons.dependent;
  const r = I.length;
  const A = reducedJacobian(meanFieldJacobian(model, yStar), nS, cons);
  // D_r = S_I · diag(Ω f) · S_Iᵀ, molecules² per time.
  const Dr = new Float64Array(r * r);
  for (let k = 0; k < nR; k++) {
    const a = omega * f[k];
    if (a === 0) continue;
    for (let p = 0; p < r; p++) {
      const sp = model.netStoich[k * nS + I[p]];
      if (sp === 0) continue;
      for (let q = 0; q < r; q++) Dr[p * r + q] += sp * a * model.netStoich[k * nS + I[q]];
    }
  }
  const sigmaR = lyapunov(A, Dr, r);
  // Σ = L·Σ_r·Lᵀ with L (nS × r): rows of independent species are unit vectors, dependent rows L0.
  const L = new Float64Array(nS * r);
  I.forEach((sp, a) => (L[sp * r + a] = 1));
  D.forEach((sp, d) => {
    for (let b = 0; b < r; b++) L[sp * r + b] = cons.link[d * r + b];
  });
  const cov = new Float64Array(nS * nS);
  for (let i = 0; i < nS; i++) {
    for (let j = i; j < nS; j++) {
      let v = 0;
      for (let a = 0; a < r; a++) {
        const lia = L[i * r + a];
        if (lia === 0) continue;
        for (let b = 0; b < r; b++) v += lia * sigmaR[a * r + b] * L[j * r + b];
      }
      cov[i * nS + j] = cov[j * nS + i] = v;
    }
  }
  const mean = new Float64Array(nS);
  for (let i = 0; i < nS; i++) mean[i] = yStar[i] * omega;
  return { covariance: cov, mean };
}
