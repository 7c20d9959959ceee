/**
 * Circuit with parsed formulas → compiled model: typed arrays for stoichiometry and constants,
 * deterministic rates in model units and stochastic propensities in molecules (CONTRACT.md §1,
 * SCIENCE.md "Units and molecule counts"). Pure: no I/O. The circuit is assumed valid
 * (lib/schemas/circuit.ts). This file never loads the formula parser: ssa/model.ts parses and
 * calls compileParsedModel, and worker threads receive formulas already parsed.
 */
import { compileExpression, expressionParameters, expressionReadsTime, expressionSpecies, type Expr, type ExprEvaluator } from "./expr-ast";
import { parseCondition, type Condition } from "./condition";
import { isTimedChange, ModelInputError, type AmountUnit, type Circuit, type NumberOrParam, type TimeUnit } from "./types";

/** Avogadro's number, mol⁻¹, exact in the 2019 SI. */
export const AVOGADRO = 6.02214076e23;

/** Litres per femtolitre. */
const LITRES_PER_FL = 1e-15;

/** Molar units in mol/L. */
const MOLAR: Record<Exclude<AmountUnit, "molecules">, number> = { nM: 1e-9, uM: 1e-6 };

/**
 * Ω: molecules per model amount unit. Ω = V · N_A · unit for concentrations (1 nM in 1 fL ≈ 0.602214);
 * 1 when amounts are already molecules (SCIENCE.md "Units and molecule counts").
 * @throws ModelInputError when a concentration unit has no positive volume.
 */
export function omegaFor(amount: AmountUnit, volumeFL: number | undefined): number {
  if (amount === "molecules") return 1;
  if (!(volumeFL !== undefined && volumeFL > 0 && Number.isFinite(volumeFL))) {
    throw new ModelInputError(`volume_fL: is required when units.amount is "${amount}"`);
  }
  return volumeFL * LITRES_PER_FL * AVOGADRO * MOLAR[amount];
}

/**
 * Molecule count nearest to a (non-negative) number of molecules; halves round up.
 * The one place where amounts become integer counts (CONTRACT.md: "initial amounts convert by
 * rounding to the nearest integer").
 */
export function roundToCount(molecules: number): number {
  if (!(molecules >= 0)) return 0;
  return Math.floor(molecules + 0.5);
}

/** Rate-law codes of `Model.law`. */
export const LawCode = { MassAction: 0, HillActivation: 1, HillRepression: 2, Expression: 3 } as const;

export interface Model {
  species: string[];
  reactionIds: string[];
  nSpecies: number;
  nReactions: number;
  /** Molecules per model amount unit (1 when amount is molecules). */
  omega: number;
  timeUnit: TimeUnit;
  amountUnit: AmountUnit;
  /** Parameter values after overrides. */
  parameters: Record<string, number>;
  /** Initial amounts in model units. */
  initialAmounts: Float64Array;
  /** Initial molecule counts (integers, via roundToCount). */
  initialCounts: Float64Array;
  /** Net stoichiometry, dense row-major nReactions × nSpecies. */
  netStoich: Float64Array;
  /** Reactant stoichiometry, dense row-major nReactions × nSpecies. */
  reactantStoich: Float64Array;
  /** Total reactant order of each reaction (Σν). */
  reactantOrder: Int32Array;
  /** Reactants in CSR form: reaction r consumes reactantNu[p] of reactantIdx[p], reactantPtr[r] ≤ p < reactantPtr[r+1]. */
  reactantPtr: Int32Array;
  reactantIdx: Int32Array;
  reactantNu: Int32Array;
  /** Net changes in CSR form (zeros dropped), same layout as the reactants. */
  changePtr: Int32Array;
  changeIdx: Int32Array;
  changeDelta: Int32Array;
  /** Species each propensity reads, CSR. */
  readsPtr: Int32Array;
  readsIdx: Int32Array;
  /** Dependency graph (Cao, Li & Petzold 2004): after reaction r fires, recompute dependents depIdx[depPtr[r]..depPtr[r+1]). */
  depPtr: Int32Array;
  depIdx: Int32Array;
  /** Rate law of each reaction. */
  law: Int8Array;
  /** Mass action: k in model units, and c = k·Πν!/Ω^(order−1) in molecules. */
  k: Float64Array;
  c: Float64Array;
  /** Hill laws: input species index, vmax, K, n, basal (model units). */
  hillInput: Int32Array;
  vmax: Float64Array;
  K: Float64Array;
  n: Float64Array;
  basal: Float64Array;
  /** Parsed expressions (null for other laws). */
  expressions: (Expr | null)[];
  /** Reactions whose rate formula reads the time `t`, ascending (the ODE only; see timeDependenceRefusal). */
  timeReactions: number[];
  speciesIndex: ReadonlyMap<string, number>;
  /** Deterministic rate of each reaction (model amount per model time) at amounts y and model time t (default 0; only formulas that read `t` use it). */
  rates(y: Float64Array, out: Float64Array, t?: number): void;
  /** Propensity of each reaction (molecules per model time) at counts x. */
  propensities(x: Float64Array, out: Float64Array): void;
  /** Propensity of reaction j alone (molecules per model time) at counts x. */
  propensity(j: number, x: Float64Array): number;
  /** The circuit's schedule of timed changes, compiled; null when it has none. */
  schedule: CompiledSchedule | null;
  /** Kernels compiled on first use for this model (see ssa/ensemble.ts kernelFor). */
  kernels: { direct?: KernelFn; generic?: KernelFn; wasm?: KernelFn | null; tau?: { epsilon: number; generic: boolean; fn: KernelFn }; scheduled?: KernelFn };
  /** Scratch buffers reused by successive synchronous calls on this model (ssa/ensemble.ts). */
  scratch: { block?: Float64Array };
}

/** One change of a schedule compiled: what it sets (species as counts and amounts; parameters) and when. */
export interface CompiledChange {
  /** Position in the circuit's schedule. */
  index: number;
  /** Time of a timed change; NaN for a triggered one. */
  at: number;
  species: Int32Array;
  counts: Float64Array;
  amounts: Float64Array;
  /** Parameters set by this change (the values in force are the model's, then every change so far). */
  parameters: Record<string, number>;
  /** A triggered change: its condition (species in model amounts) and delay (model time). */
  when?: { condition: Condition; source: string; delay: number };
}

/**
 * A schedule compiled: every change in schedule order, the timed ones in time order, the
 * triggered ones, and the model whose rates hold for a set of parameter values in force (the
 * base model for none; compiled once per distinct set and cached; ssa/schedule-runtime.ts walks
 * through them). Every phase has the same species, reactions and dependency graph.
 */
export interface CompiledSchedule {
  entries: CompiledChange[];
  timed: CompiledChange[];
  triggers: CompiledChange[];
  /** @throws ModelInputError when more than MAX_PHASES distinct parameter sets arise in one run. */
  phaseFor(inForce: Readonly<Record<string, number>>): Model;
}

/** Distinct sets of parameter values a schedule may bring about in one model (each a compiled model). */
export const MAX_PHASES = 256;

/** Signature of a one-cell kernel (ssa/kernel.ts DirectKernel), repeated here to avoid an import cycle. */
export type KernelFn = (
  x: Float64Array,
  rs: Int32Array,
  grid: Float64Array,
  nGrid: number,
  out: Float64Array,
  o: number,
  B: number,
  maxEvents: number,
) => number;

/** A kernel that can also lend its own sample block (ssa/wasm-kernel.ts: a view over its memory, written without a copy). */
export type BlockKernelFn = KernelFn & { block?: (values: number, gridLength: number) => Float64Array | null };

/**
 * Why a stochastic method cannot run a model, or null: a propensity that depends on time breaks the
 * exactness of the direct method (its waiting time −ln(u)/a0 assumes a0 constant between events,
 * Gillespie 1977) and the leap condition of tau-leaping, so rates must be functions of the state.
 */
export function timeDependenceRefusal(m: Pick<Model, "timeReactions">): string | null {
  const j = m.timeReactions[0];
  if (j === undefined) return null;
  return `reactions[${j}].rate.expression: depends on time t; stochastic runs need rates that depend on the state only (use a schedule for a timed change)`;
}

/** x^n for a non-negative base; repeated squaring for integer n (SCIENCE.md: integer powers). */
export function powNonNeg(x: number, n: number): number {
  if (Number.isInteger(n) && n >= 0 && n <= 64) {
    let result = 1;
    let base = x;
    let e = n;
    while (e > 0) {
      if (e & 1) result *= base;
      base *= base;
      e >>= 1;
    }
    return result;
  }
  return Math.pow(x, n);
}

/**
 * h⁺(x) = xⁿ/(Kⁿ + xⁿ) for x ≥ 0 and K > 0 in the same units (Hill 1910), computed in ratio form
 * r = (x/K)ⁿ, h⁺ = r/(1 + r), which never overflows to ∞/∞ for large x or n.
 */
export function hillActivation(x: number, K: number, n: number): number {
  const r = powNonNeg(x / K, n);
  return r === Infinity ? 1 : r / (1 + r);
}

/** h⁻(x) = Kⁿ/(Kⁿ + xⁿ) = 1/(1 + (x/K)ⁿ) = 1 − h⁺(x), for x ≥ 0 and K > 0 in the same units. */
export function hillRepression(x: number, K: number, n: number): number {
  const r = powNonNeg(x / K, n);
  return 1 / (1 + r);
}

function factorial(n: number): number {
  let f = 1;
  for (let i = 2; i <= n; i++) f *= i;
  return f;
}

/** Falling-factorial binomial C(x, ν) for integer x ≥ 0; 0 when x < ν. */
export function binomialCount(x: number, nu: number): number {
  if (nu === 1) return x;
  if (x < nu) return 0;
  let num = 1;
  for (let i = 0; i < nu; i++) num *= x - i;
  return num / factorial(nu);
}

function resolveParameters(c: Circuit, overrides: Record<string, number> | undefined): Record<string, number> {
  const params: Record<string, number> = { ...(c.parameters ?? {}) };
  for (const [name, value] of Object.entries(overrides ?? {})) {
    if (!Object.prototype.hasOwnProperty.call(params, name)) {
      throw new ModelInputError(`overrides.${name}: unknown parameter "${name}"`);
    }
    if (typeof value !== "number" || !Number.isFinite(value)) {
      throw new ModelInputError(`overrides.${name}: must be a finite number`);
    }
    params[name] = value;
  }
  return params;
}

function resolveValue(v: NumberOrParam | undefined, params: Record<string, number>, field: string, fallback?: number): number {
  if (v === undefined) {
    if (fallback !== undefined) return fallback;
    throw new ModelInputError(`${field}: is required`);
  }
  if (typeof v === "number") return v;
  if (!Object.prototype.hasOwnProperty.call(params, v)) throw new ModelInputError(`${field}: unknown parameter "${v}"`);
  return params[v];
}

function checkBound(value: number, field: string, min: number, strict: boolean): void {
  if (!Number.isFinite(value) || (strict ? !(value > min) : !(value >= min))) {
    throw new ModelInputError(`${field}: must be ${strict ? ">" : ">="} ${min} (got ${value})`);
  }
}

/**
 * Compiles a validated circuit whose formulas are already parsed (`expressions[j]` for reaction j,
 * null for other laws), with optional parameter overrides.
 * @throws ModelInputError naming the field when an override is unknown or breaks a bound.
 */
export function compileParsedModel(c: Circuit, overrides: Record<string, number> | undefined, parsed: (Expr | null)[]): Model {
  const model = compileRates(c, overrides, parsed);
  if (c.schedule && c.schedule.length > 0) model.schedule = compileSchedule(c, overrides, parsed, model);
  return model;
}

/**
 * The schedule compiled: each change's species as counts, its parameters checked by compiling the
 * model with them in force (so a bad value is refused before any cell runs), each condition parsed.
 * @throws ModelInputError naming `schedule[k].<field>` when a name is unknown, a value breaks a bound or a condition is invalid.
 */
function compileSchedule(c: Circuit, overrides: Record<string, number> | undefined, parsed: (Expr | null)[], base: Model): CompiledSchedule {
  const plain: Circuit = { ...c, schedule: undefined };
  const params = c.parameters ?? {};
  const isParameter = (id: string) => Object.prototype.hasOwnProperty.call(params, id) && !base.speciesIndex.has(id);
  const phases = new Map<string, Model>();
  const keyOf = (inForce: Readonly<Record<string, number>>) => JSON.stringify(Object.keys(inForce).sort().map((k) => [k, inForce[k]]));
  phases.set(keyOf({}), base);
  const phaseFor = (inForce: Readonly<Record<string, number>>): Model => {
    const key = keyOf(inForce);
    let phase = phases.get(key);
    if (!phase) {
      if (phases.size >= MAX_PHASES) throw new ModelInputError(`schedule: the changes bring about more than ${MAX_PHASES} distinct sets of parameter values; set fewer parameters, or fewer distinct values`);
      phase = compileRates(plain, { ...(overrides ?? {}), ...inForce }, parsed);
      phases.set(key, phase);
    }
    return phase;
  };
  // A field naming a parameter reads it once, here, with the run's overrides in force.
  const values = resolveParameters(c, overrides);
  const valueOf = (v: NumberOrParam, field: string): number => {
    if (typeof v === "string" && !isParameter(v)) throw new ModelInputError(`${field}: unknown parameter "${v}"`);
    const value = resolveValue(v, values, field);
    const via = typeof v === "string" ? ` (parameter "${v}" is ${value})` : "";
    if (!(Number.isFinite(value) && value >= 0)) throw new ModelInputError(`${field}: must be a number >= 0${via}`);
    return value;
  };
  const entries: CompiledChange[] = [];
  let lastAt = -Infinity;
  (c.schedule ?? []).forEach((change, k) => {
    const species: number[] = [];
    const counts: number[] = [];
    const amounts: number[] = [];
    const set: Record<string, number> = {};
    for (const [name, v] of Object.entries(change.set)) {
      const i = base.speciesIndex.get(name);
      const value = valueOf(v, `schedule[${k}].set.${name}`);
      if (i !== undefined) {
        species.push(i);
        amounts.push(value);
        counts.push(roundToCount(value * base.omega));
      } else if (Object.prototype.hasOwnProperty.call(params, name)) set[name] = value;
      else throw new ModelInputError(`schedule[${k}].set.${name}: unknown species or parameter "${name}"`);
    }
    if (Object.keys(set).length > 0) {
      try {
        phaseFor(set);
      } catch (e) {
        if (e instanceof ModelInputError) throw new ModelInputError(`schedule[${k}].set: ${e.message.replace(/^overrides\./, "")}`);
        throw e;
      }
    }
    const entry: CompiledChange = { index: k, at: NaN, species: Int32Array.from(species), counts: Float64Array.from(counts), amounts: Float64Array.from(amounts), parameters: set };
    if (isTimedChange(change)) {
      const at = valueOf(change.at, `schedule[${k}].at`);
      if (at < lastAt) throw new ModelInputError(`schedule[${k}].at: must not be earlier than the timed change before it (${lastAt})`);
      lastAt = at;
      entry.at = at;
    } else {
      const delay = valueOf(change.delay ?? 0, `schedule[${k}].delay`);
      const res = parseCondition(change.when, { isSpecies: (id) => base.speciesIndex.has(id), isParameter });
      if (!res.ok) throw new ModelInputError(`schedule[${k}].when: ${res.reason}`);
      entry.when = { condition: res.condition, source: change.when, delay };
    }
    entries.push(entry);
  });
  return { entries, timed: entries.filter((e) => !e.when), triggers: entries.filter((e) => e.when), phaseFor };
}

function compileRates(c: Circuit, overrides: Record<string, number> | undefined, parsed: (Expr | null)[]): Model {
  const params = resolveParameters(c, overrides);
  const omega = omegaFor(c.units.amount, c.volume_fL);
  const species = c.species.map((s) => s.id);
  const speciesIndex = new Map<string, number>();
  species.forEach((id, i) => speciesIndex.set(id, i));
  const nS = species.length;
  const nR = c.reactions.length;

  const initialAmounts = new Float64Array(nS);
  const initialCounts = new Float64Array(nS);
  c.species.forEach((s, i) => {
    initialAmounts[i] = s.initial;
    initialCounts[i] = roundToCount(s.initial * omega);
  });

  const netStoich = new Float64Array(nR * nS);
  const reactantStoich = new Float64Array(nR * nS);
  const reactantOrder = new Int32Array(nR);
  const law = new Int8Array(nR);
  const k = new Float64Array(nR);
  const cc = new Float64Array(nR);
  const hillInput = new Int32Array(nR).fill(-1);
  const vmax = new Float64Array(nR);
  const K = new Float64Array(nR);
  const n = new Float64Array(nR);
  const basal = new Float64Array(nR);
  const expressions: (Expr | null)[] = [];
  const reads: number[][] = [];

  c.reactions.forEach((r, j) => {
    for (const [id, nu] of Object.entries(r.reactants ?? {})) {
      const i = speciesIndex.get(id);
      if (i === undefined) throw new ModelInputError(`reactions[${j}].reactants.${id}: unknown species "${id}"`);
      reactantStoich[j * nS + i] += nu;
      netStoich[j * nS + i] -= nu;
      reactantOrder[j] += nu;
    }
    for (const [id, nu] of Object.entries(r.products ?? {})) {
      const i = speciesIndex.get(id);
      if (i === undefined) throw new ModelInputError(`reactions[${j}].products.${id}: unknown species "${id}"`);
      netStoich[j * nS + i] += nu;
    }
    const at = `reactions[${j}].rate`;
    const rate = r.rate;
    const readSet: number[] = [];
    if (rate.law === "mass_action") {
      law[j] = LawCode.MassAction;
      k[j] = resolveValue(rate.k, params, `${at}.k`);
      checkBound(k[j], `${at}.k`, 0, false);
      let nuFact = 1;
      for (let i = 0; i < nS; i++) {
        const nu = reactantStoich[j * nS + i];
        if (nu > 0) {
          nuFact *= factorial(nu);
          readSet.push(i);
        }
      }
      // c = k · Πν! / Ω^(order−1) (Gillespie 1977; SCIENCE.md "Conversions").
      cc[j] = (k[j] * nuFact) / Math.pow(omega, reactantOrder[j] - 1);
      expressions.push(null);
    } else if (rate.law === "expression") {
      law[j] = LawCode.Expression;
      const expr = parsed[j];
      if (!expr) throw new ModelInputError(`${at}.expression: not parsed`);
      for (const id of expressionSpecies(expr)) {
        const i = speciesIndex.get(id);
        if (i === undefined) throw new ModelInputError(`${at}.expression: unknown species "${id}"`);
        readSet.push(i);
      }
      for (const id of expressionParameters(expr)) {
        if (!Object.prototype.hasOwnProperty.call(params, id)) throw new ModelInputError(`${at}.expression: unknown parameter "${id}"`);
      }
      expressions.push(expr);
    } else {
      law[j] = rate.law === "hill_activation" ? LawCode.HillActivation : LawCode.HillRepression;
      const input = speciesIndex.get(rate.input);
      if (input === undefined) throw new ModelInputError(`${at}.input: unknown species "${rate.input}"`);
      hillInput[j] = input;
      vmax[j] = resolveValue(rate.vmax, params, `${at}.vmax`);
      K[j] = resolveValue(rate.K, params, `${at}.K`);
      n[j] = resolveValue(rate.n, params, `${at}.n`);
      basal[j] = resolveValue(rate.basal, params, `${at}.basal`, 0);
      checkBound(vmax[j], `${at}.vmax`, 0, false);
      checkBound(K[j], `${at}.K`, 0, true);
      checkBound(n[j], `${at}.n`, 0, true);
      checkBound(basal[j], `${at}.basal`, 0, false);
      readSet.push(input);
      expressions.push(null);
    }
    // A non-mass-action law with reactants is switched off while a reactant is short (no negative counts).
    if (rate.law !== "mass_action") {
      for (let i = 0; i < nS; i++) if (reactantStoich[j * nS + i] > 0 && !readSet.includes(i)) readSet.push(i);
    }
    reads.push(readSet.sort((a, b) => a - b));
  });

  const csr = (rows: number[][]): [Int32Array, Int32Array] => {
    const ptr = new Int32Array(rows.length + 1);
    rows.forEach((row, r) => (ptr[r + 1] = ptr[r] + row.length));
    const idx = new Int32Array(ptr[rows.length]);
    rows.forEach((row, r) => idx.set(row, ptr[r]));
    return [ptr, idx];
  };

  const reactantRows: number[][] = [];
  const reactantNuRows: number[][] = [];
  const changeRows: number[][] = [];
  const deltaRows: number[][] = [];
  for (let j = 0; j < nR; j++) {
    const rr: number[] = [];
    const rn: number[] = [];
    const cr: number[] = [];
    const cd: number[] = [];
    for (let i = 0; i < nS; i++) {
      const nu = reactantStoich[j * nS + i];
      if (nu > 0) {
        rr.push(i);
        rn.push(nu);
      }
      const d = netStoich[j * nS + i];
      if (d !== 0) {
        cr.push(i);
        cd.push(d);
      }
    }
    reactantRows.push(rr);
    reactantNuRows.push(rn);
    changeRows.push(cr);
    deltaRows.push(cd);
  }
  const [reactantPtr, reactantIdx] = csr(reactantRows);
  const reactantNu = Int32Array.from(reactantNuRows.flat());
  const [changePtr, changeIdx] = csr(changeRows);
  const changeDelta = Int32Array.from(deltaRows.flat());
  const [readsPtr, readsIdx] = csr(reads);

  // Reaction r affects reaction q when r changes a species q reads. Built from each species'
  // readers, so the cost is the graph's size, not nR² (20,000 reactions took 20 s the other way);
  // rows stay in ascending q, the order the kernels update propensities in.
  const readers: number[][] = Array.from({ length: nS }, () => []);
  reads.forEach((row, q) => row.forEach((i) => readers[i].push(q)));
  const seenBy = new Int32Array(nR).fill(-1);
  const depRows: number[][] = [];
  for (let r = 0; r < nR; r++) {
    const row: number[] = [];
    for (const i of changeRows[r]) {
      for (const q of readers[i]) {
        if (seenBy[q] !== r) {
          seenBy[q] = r;
          row.push(q);
        }
      }
    }
    depRows.push(row.sort((a, b) => a - b));
  }
  const [depPtr, depIdx] = csr(depRows);

  const amountEval: (ExprEvaluator | null)[] = expressions.map((e) =>
    e ? compileExpression(e, speciesIndex, new Map(Object.entries(params))) : null,
  );
  const timeReactions: number[] = [];
  expressions.forEach((e, j) => {
    if (e && expressionReadsTime(e)) timeReactions.push(j);
  });
  const countEval: (ExprEvaluator | null)[] = expressions.map((e, j) => {
    if (!e) return null;
    // Stochastic paths refuse such a model first (timeDependenceRefusal); were one to slip
    // through, it fails loudly here rather than fire at the rate of t = 0.
    if (timeReactions.includes(j)) {
      const message = timeDependenceRefusal({ timeReactions: [j] }) as string;
      return () => {
        throw new ModelInputError(message);
      };
    }
    return compileExpression(e, speciesIndex, new Map(Object.entries(params)), 1 / omega);
  });

  const rates = (y: Float64Array, out: Float64Array, t = 0): void => {
    for (let j = 0; j < nR; j++) {
      switch (law[j]) {
        case LawCode.MassAction: {
          // k · Π [X]^ν over reactants (CONTRACT.md §1).
          let v = k[j];
          for (let p = reactantPtr[j]; p < reactantPtr[j + 1]; p++) v *= powNonNeg(y[reactantIdx[p]], reactantNu[p]);
          out[j] = v;
          break;
        }
        case LawCode.HillActivation:
          out[j] = basal[j] + vmax[j] * hillActivation(Math.max(0, y[hillInput[j]]), K[j], n[j]);
          break;
        case LawCode.HillRepression:
          out[j] = basal[j] + vmax[j] * hillRepression(Math.max(0, y[hillInput[j]]), K[j], n[j]);
          break;
        default:
          out[j] = (amountEval[j] as ExprEvaluator)(y, t);
      }
    }
  };

  const KOmega = K.map((v) => v * omega);
  const propensity = (j: number, x: Float64Array): number => {
    let a: number;
    switch (law[j]) {
      case LawCode.MassAction: {
        // c · Π C(x, ν) (Gillespie 1977).
        a = cc[j];
        for (let p = reactantPtr[j]; p < reactantPtr[j + 1]; p++) a *= binomialCount(x[reactantIdx[p]], reactantNu[p]);
        return a;
      }
      case LawCode.HillActivation:
        // Ω · (basal + vmax · h⁺(x/Ω)), with x/Ω over K written as x over K·Ω.
        a = omega * (basal[j] + vmax[j] * hillActivation(x[hillInput[j]], KOmega[j], n[j]));
        break;
      case LawCode.HillRepression:
        a = omega * (basal[j] + vmax[j] * hillRepression(x[hillInput[j]], KOmega[j], n[j]));
        break;
      default:
        a = omega * (countEval[j] as ExprEvaluator)(x, 0);
        if (!(a > 0)) a = 0; // a negative or undefined formula value cannot fire
    }
    for (let p = reactantPtr[j]; p < reactantPtr[j + 1]; p++) if (x[reactantIdx[p]] < reactantNu[p]) return 0;
    return a;
  };
  const propensities = (x: Float64Array, out: Float64Array): void => {
    for (let j = 0; j < nR; j++) out[j] = propensity(j, x);
  };

  return {
    species,
    reactionIds: c.reactions.map((r) => r.id),
    nSpecies: nS,
    nReactions: nR,
    omega,
    timeUnit: c.units.time,
    amountUnit: c.units.amount,
    parameters: params,
    initialAmounts,
    initialCounts,
    netStoich,
    reactantStoich,
    reactantOrder,
    reactantPtr,
    reactantIdx,
    reactantNu,
    changePtr,
    changeIdx,
    changeDelta,
    readsPtr,
    readsIdx,
    depPtr,
    depIdx,
    law,
    k,
    c: cc,
    hillInput,
    vmax,
    K,
    n,
    basal,
    expressions,
    timeReactions,
    speciesIndex,
    rates,
    propensity,
    propensities,
    schedule: null,
    kernels: {},
    scratch: {},
  };
}

