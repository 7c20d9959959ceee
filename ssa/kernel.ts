/**
 * Gillespie direct method for one cell, sampled on a time grid (Gillespie 1977, J Phys Chem
 * 81:2340), with a dependency graph so that after an event only the propensities that read a
 * changed species are recomputed (Cao, Li & Petzold 2004, J Chem Phys 121:4059).
 *
 * Two interchangeable implementations:
 * - `compileDirectKernel`: a kernel specialised per circuit. Its source is generated from the
 *   compiled model; only array indices, integer literals and formatted numbers reach it (rate
 *   formulas come from the validated AST, see ssa/expr.ts), never user text. Counts, propensities
 *   and the xoshiro128+ state live in local variables; Hill propensities are read from per-count
 *   tables; the waiting time's logarithm is ssa/rng.ts exponentialOfWord, inlined.
 * - `directKernelGeneric`: the same algorithm over typed arrays, for very large networks and as an
 *   independent check of the generated one.
 * ssa/wasm-kernel.ts emits the generated kernel's algorithm as WebAssembly, operation for
 * operation; a change here goes there too (tests/ssa/wasm-kernel.test.ts compares them bitwise).
 * Both consume the random stream identically (two words per event: τ first, then the reaction)
 * and compute τ by the same arithmetic, so they give the same path for the same state up to
 * round-off in the propensities.
 *
 * Grid sampling: the sample at grid time t_g is the state just before the first event after t_g.
 * Pure: no I/O.
 */
import { expressionSource, formatNumber } from "./expr-ast";
import { LawCode, hillActivation, hillRepression, type KernelFn, type Model } from "./model-core";
import { DirectRng, LOG1P_TABLE, POW2_TABLE, TWO_POW_M32, XOSHIRO_STEP_SOURCE, exponentialSource } from "./rng";

/**
 * Runs one cell from its current state to the end of the grid.
 * @param x      counts, read at start and written back at the end
 * @param rs     generator state [a, b, c, d] (ssa/rng.ts), advanced in place
 * @param grid   grid times, length nGrid + 1 with +∞ as sentinel
 * @param out    samples: value of species i at grid point g goes to out[o + (g·nS + i)·B]
 * @returns      the number of events, or −1 when `maxEvents` was exceeded
 */
export type DirectKernel = KernelFn;

/** Counts above which the generated kernel is not used (int32 arithmetic on counts is assumed). */
export const MAX_KERNEL_COUNT = 2 ** 30;

const MAX_TABLE = 1 << 17;

/** Largest reaction count for which a circuit gets a generated kernel (the sum of propensities is unrolled). */
export const MAX_GENERATED_REACTIONS = 400;

/**
 * Propensity of a Hill reaction at count x, in molecules per time:
 * a(x) = Ω · (basal + vmax · h(x / Ω)) with h in ratio form over K·Ω (SCIENCE.md "Conversions").
 */
export function hillPropensity(m: Model, j: number, x: number): number {
  const KOmega = m.K[j] * m.omega;
  const h = m.law[j] === LawCode.HillActivation ? hillActivation(x, KOmega, m.n[j]) : hillRepression(x, KOmega, m.n[j]);
  return m.omega * (m.basal[j] + m.vmax[j] * h);
}

/**
 * Table of a Hill propensity over counts 0..N−1 (SCIENCE.md: tabulate per count once per run, a
 * table read instead of a pow per event). N covers 40·K·Ω, at least 256, at most 2^17; counts
 * beyond it fall back to the formula.
 */
export function hillTable(m: Model, j: number): Float64Array {
  const KOmega = m.K[j] * m.omega;
  const size = Math.min(MAX_TABLE, Math.max(256, Math.ceil(40 * KOmega) + 1));
  const t = new Float64Array(size);
  for (let x = 0; x < size; x++) t[x] = hillPropensity(m, j, x);
  return t;
}

/** Clamp used for formula propensities: a negative or undefined value cannot fire. */
export const positivePart = (v: number): number => (v > 0 ? v : 0);

function reactantGuard(m: Model, j: number, name: (i: number) => string): string {
  const parts: string[] = [];
  for (let p = m.reactantPtr[j]; p < m.reactantPtr[j + 1]; p++) parts.push(`${name(m.reactantIdx[p])} >= ${m.reactantNu[p]}`);
  return parts.join(" && ");
}

function factorial(n: number): number {
  let f = 1;
  for (let i = 2; i <= n; i++) f *= i;
  return f;
}

/**
 * Source of reaction j's propensity over local counts x0, x1, … (or the expressions `name(i)`
 * gives, e.g. \`(x2 + 1)\` for a one-molecule difference).
 */
export function propensitySource(m: Model, j: number, name: (i: number) => string = (i) => `x${i}`): string {
  switch (m.law[j]) {
    case LawCode.MassAction: {
      // c · Π C(x, ν) = (c / Πν!) · Π x(x−1)…(x−ν+1) (Gillespie 1977).
      let coef = m.c[j];
      const factors: string[] = [];
      for (let p = m.reactantPtr[j]; p < m.reactantPtr[j + 1]; p++) {
        const i = m.reactantIdx[p];
        const nu = m.reactantNu[p];
        coef /= factorial(nu);
        for (let q = 0; q < nu; q++) factors.push(q === 0 ? name(i) : `(${name(i)} - ${q})`);
      }
      if (coef === 0) return "0";
      return [formatNumber(coef), ...factors].join(" * ");
    }
    case LawCode.HillActivation:
    case LawCode.HillRepression: {
      const i = m.hillInput[j];
      const xi = name(i);
      const body = `(${xi} < TN${j} ? T${j}[${xi}] : H${j}(${xi}))`;
      const guard = reactantGuard(m, j, name);
      return guard ? `(${guard} ? ${body} : 0)` : body;
    }
    default: {
      const expr = m.expressions[j];
      if (!expr) throw new TypeError(`reaction ${j} has no expression`);
      const f = expressionSource(expr, m.speciesIndex, new Map(Object.entries(m.parameters)), (i) => `${name(i)} * ${formatNumber(1 / m.omega)}`);
      const body = `P(${formatNumber(m.omega)} * ${f})`;
      const guard = reactantGuard(m, j, name);
      return guard ? `(${guard} ? ${body} : 0)` : body;
    }
  }
}

/** Generated source of the direct-method kernel for a model (exported for inspection and tests). */
export function directKernelSource(m: Model): string {
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const lines: string[] = [];
  const S = (i: number) => `x${i}`;
  lines.push(`"use strict";`);
  lines.push(`return function directKernel(x, rs, grid, nGrid, out, o, B, maxEvents) {`);
  for (let j = 0; j < nR; j++) {
    if (m.law[j] === LawCode.HillActivation || m.law[j] === LawCode.HillRepression) {
      lines.push(`  const T${j} = T[${j}], TN${j} = T${j}.length, H${j} = H[${j}];`);
    }
  }
  for (let i = 0; i < nS; i++) lines.push(`  let ${S(i)} = x[${i}] | 0;`);
  lines.push(`  let ra = rs[0] | 0, rb = rs[1] | 0, rc = rs[2] | 0, rd = rs[3] | 0, ru = 0, rt = 0;`);
  for (let j = 0; j < nR; j++) lines.push(`  let a${j} = ${propensitySource(m, j)};`);
  for (let i = 1; i < nS; i++) lines.push(`  const s${i} = ${i} * B;`);
  lines.push(`  const tB = ${nS} * B;`);
  lines.push(`  let t = 0, g = 0, tg = grid[0], events = 0;`);
  const writeBack = [
    ...Array.from({ length: nS }, (_, i) => `x[${i}] = ${S(i)};`),
    `rs[0] = ra; rs[1] = rb; rs[2] = rc; rs[3] = rd;`,
  ].join(" ");
  lines.push(`  for (;;) {`);
  const sum = Array.from({ length: nR }, (_, j) => `a${j}`).join(" + ");
  lines.push(`    const asum = ${sum};`);
  lines.push(`    ${XOSHIRO_STEP_SOURCE}`);
  // τ = −ln(u₁)/a0 with u₁ = 1 − word·2^−32 in (0, 1] (Gillespie 1977, eq. 21a), −ln by exponentialOfWord.
  lines.push(`    const q = ru >>> 0; let ex = 0;`);
  lines.push(`    ${exponentialSource("q", "ex")}`);
  lines.push(`    t = asum > 0 ? t + ex / asum : Infinity;`);
  lines.push(`    while (tg < t) {`);
  const samples = Array.from({ length: nS }, (_, i) => (i === 0 ? `out[o] = x0;` : `out[o + s${i}] = ${S(i)};`)).join(" ");
  lines.push(`      ${samples} o += tB;`);
  lines.push(`      if (++g === nGrid) { ${writeBack} return events; }`);
  lines.push(`      tg = grid[g];`);
  lines.push(`    }`);
  lines.push(`    ${XOSHIRO_STEP_SOURCE}`);
  // Fire the smallest j with Σ_{k≤j} a_k > u₂·a0 (Gillespie 1977, eq. 21b); the last branch absorbs round-off.
  lines.push(`    let r = (ru >>> 0) * ${TWO_POW_M32} * asum;`);
  for (let j = 0; j < nR; j++) {
    const cond = j < nR - 1 ? `(r -= a${j}) < 0` : `a${j} > 0`;
    lines.push(`    ${j === 0 ? "if" : "else if"} (${cond}) {`);
    const body: string[] = [];
    for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) {
      const i = m.changeIdx[p];
      const d = m.changeDelta[p];
      body.push(d === 1 ? `${S(i)}++;` : d === -1 ? `${S(i)}--;` : `${S(i)} += ${d};`);
    }
    for (let p = m.depPtr[j]; p < m.depPtr[j + 1]; p++) {
      const q = m.depIdx[p];
      body.push(`a${q} = ${propensitySource(m, q)};`);
    }
    lines.push(`      ${body.join(" ")}`);
    lines.push(`    }`);
  }
  lines.push(`    if (++events > maxEvents) { ${writeBack} return -1; }`);
  lines.push(`  }`);
  lines.push(`};`);
  return lines.join("\n");
}

/** Whether a model can use the generated kernel. */
export function canGenerateKernel(m: Model): boolean {
  if (m.nReactions > MAX_GENERATED_REACTIONS) return false;
  for (let i = 0; i < m.nSpecies; i++) if (m.initialCounts[i] > MAX_KERNEL_COUNT) return false;
  return true;
}

/**
 * Builds the generated direct-method kernel of a model. The source contains only indices and
 * formatted numbers (see directKernelSource); tables and fallbacks are passed in as arguments.
 */
export function compileDirectKernel(m: Model): DirectKernel {
  const T: (Float64Array | null)[] = [];
  const H: (((x: number) => number) | null)[] = [];
  for (let j = 0; j < m.nReactions; j++) {
    const isHill = m.law[j] === LawCode.HillActivation || m.law[j] === LawCode.HillRepression;
    T.push(isHill ? hillTable(m, j) : null);
    H.push(isHill ? (x: number) => hillPropensity(m, j, x) : null);
  }
  const source = directKernelSource(m);
  // Generated from the validated model only (indices and formatted numbers), see the file header.
  const factory = new Function("T", "H", "P", "P2", "LT", source) as (
    t: typeof T,
    h: typeof H,
    p: typeof positivePart,
    p2: Float64Array,
    lt: Float64Array,
  ) => DirectKernel;
  return factory(T, H, positivePart, POW2_TABLE, LOG1P_TABLE);
}

/**
 * Direct method over typed arrays (same contract as DirectKernel). Allocates its scratch arrays
 * once per call, never per event. The propensity sum is recomputed each event to avoid drift.
 */
export function directKernelGeneric(m: Model): DirectKernel {
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const a = new Float64Array(nR);
  return (x, rs, grid, nGrid, out, o, B, maxEvents) => {
    const rng = new DirectRng(rs);
    m.propensities(x, a);
    let t = 0;
    let g = 0;
    let tg = grid[0];
    let events = 0;
    for (;;) {
      let asum = 0;
      for (let j = 0; j < nR; j++) asum += a[j];
      const e = rng.exponential();
      t = asum > 0 ? t + e / asum : Infinity;
      while (tg < t) {
        for (let i = 0; i < nS; i++) out[o + i * B] = x[i];
        o += nS * B;
        if (++g === nGrid) return events;
        tg = grid[g];
      }
      let r = rng.uniform() * asum;
      let j = 0;
      for (; j < nR - 1; j++) if ((r -= a[j]) < 0) break;
      if (j === nR - 1 && !(a[j] > 0)) {
        // round-off left r past the last positive propensity: no event (probability ~1e−16)
      } else {
        for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) x[m.changeIdx[p]] += m.changeDelta[p];
        for (let p = m.depPtr[j]; p < m.depPtr[j + 1]; p++) a[m.depIdx[p]] = m.propensity(m.depIdx[p], x);
      }
      if (++events > maxEvents) return -1;
    }
  };
}
