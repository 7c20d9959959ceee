/**
 * Tau-leaping kernel specialised per circuit: the algorithm of ssa/tau.ts (Cao, Gillespie & Petzold
 * 2006 step selection, with the two bounds stated there) generated as straight-line code, the way
 * ssa/kernel.ts generates the direct method. Counts, propensities, the g_i of eq. 27 ff., μ̂_i, σ̂²_i,
 * the drift Jacobian's non-zero entries and the Tyche-i state are local variables; Hill propensities
 * and Hill log-sensitivities are read from per-count tables; the Jacobian's one-molecule
 * differences are table reads too; the table branch of ssa/poisson.ts is inlined per reaction
 * (means of 64 and more call `poisson` itself, with the stream handed over through `rs`). Only array indices, integer literals and formatted numbers reach the source
 * (formula laws come from the validated AST), never user text.
 *
 * It consumes the cell's stream exactly as `tauKernel` does (same draws in the same order) and
 * performs the same arithmetic in the same order, so both give the same path for the same state up
 * to round-off in the propensities (tests compare them). Pure: no I/O.
 */
import { formatNumber } from "./expr-ast";
import { hillPropensity, hillTable, positivePart, propensitySource, type DirectKernel } from "./kernel";
import { LawCode, hillActivation, type Model } from "./model-core";
import { POISSON_QUANTA, POISSON_TABLE_MAX, POISSON_TABLES, poisson, poissonRemainder } from "./poisson";
import { CellRng, TWO_POW_M32, TYCHEI_STEP_SOURCE } from "./rng";
import { N_CRITICAL, SSA_FACTOR, SSA_STEPS, TAU_EPSILON, type TauOptions } from "./tau";

const isHill = (m: Model, j: number): boolean => m.law[j] === LawCode.HillActivation || m.law[j] === LawCode.HillRepression;

/** max(1, s) with s the Hill function's local log-sensitivity at count x (ssa/tau.ts header). */
function hillSensitivity(m: Model, j: number, x: number): number {
  const hp = hillActivation(x, m.K[j] * m.omega, m.n[j]);
  const s = m.law[j] === LawCode.HillActivation ? m.n[j] * (1 - hp) : m.n[j] * hp;
  return Math.max(1, s);
}

/** Source of g_i's term for reactant (i, ν) of a mass-action reaction of total order `order` (CGP 2006, eq. 27 ff.). */
function orderTerm(order: number, nu: number, xi: string): string {
  if (order <= 1) return "1";
  if (order === 2) return nu === 1 ? "2" : `(2 + 1 / Math.max(1, ${xi} - 1))`;
  if (nu === 1) return String(order);
  if (order === 3 && nu === 2) return `(1.5 * (2 + 1 / Math.max(1, ${xi} - 1)))`;
  if (order === 3 && nu === 3) return `(3 + 1 / Math.max(1, ${xi} - 1) + 2 / Math.max(1, ${xi} - 2))`;
  return String(order + nu);
}

/** The Tyche-i step of ssa/rng.ts as one comma expression (the new word in `ra`). */
const TYCHEI_STEP_EXPR = TYCHEI_STEP_SOURCE.trim()
  .replace(/;\s*$/, "")
  .split(/;\s*/)
  .join(", ");

/**
 * Source that sets `f${j}` to Poisson(a_j·τ) exactly as ssa/poisson.ts `poisson` does from the same
 * stream: its table branch inline over the local stream, else a call with the stream handed over.
 */
function poissonSource(j: number, guard: string, uniform: string, saveRng: string, loadRng: string): string {
  const mean = `m${j}`;
  return [
    `let f${j} = 0;`,
    `if (${guard}) {`,
    `  const ${mean} = a${j} * tau;`,
    `  if (${mean} < ${POISSON_TABLE_MAX}) {`,
    `    const q = Math.floor(${mean} * ${POISSON_QUANTA});`,
    `    const dd = ${mean} - q / ${POISSON_QUANTA};`,
    `    if (q > 0) { const u = ${uniform}; const s = PS[q]; let k = PG[s + Math.floor(u * PL[q])]; while (PC[s + k] <= u) k++; f${j} = k; }`,
    `    if (dd > 0) { const u = ${uniform}; if (u >= 1 - dd) f${j} += PR(u, dd); }`,
    `  } else { ${saveRng} f${j} = POIS(rng, ${mean}); ${loadRng} }`,
    `}`,
  ].join("\n      ");
}

/** Generated source of the tau-leaping kernel (exported for inspection and tests). */
export function tauKernelSource(m: Model, epsilon: number = TAU_EPSILON): string {
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const eps = formatNumber(epsilon);
  const X = (i: number) => `x${i}`;
  const L: string[] = [];
  const changes = (j: number): [number, number][] => {
    const out: [number, number][] = [];
    for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) out.push([m.changeIdx[p], m.changeDelta[p]]);
    return out;
  };
  const isRead = new Uint8Array(nS);
  for (let p = 0; p < m.readsIdx.length; p++) isRead[m.readsIdx[p]] = 1;
  const canFall = new Uint8Array(nS);
  for (let p = 0; p < m.changeIdx.length; p++) if (m.changeDelta[p] < 0) canFall[m.changeIdx[p]] = 1;

  const sample = [`out[o] = x0;`, ...Array.from({ length: nS - 1 }, (_, k) => `out[o + s${k + 1}] = ${X(k + 1)};`)].join(" ");
  const saveRng = `rs[0] = ra; rs[1] = rb; rs[2] = rc; rs[3] = rd;`;
  const loadRng = `ra = rs[0] | 0; rb = rs[1] | 0; rc = rs[2] | 0; rd = rs[3] | 0;`;
  const writeBack = [...Array.from({ length: nS }, (_, i) => `x[${i}] = ${X(i)};`), saveRng].join(" ");
  // One Tyche-i step, then CellRng's uniform on [0, 1) or uniformPositive on (0, 1].
  const uniform = `(${TYCHEI_STEP_EXPR}, (ra >>> 0) * ${TWO_POW_M32})`;
  const uniformPositive = `(${TYCHEI_STEP_EXPR}, 1 - (ra >>> 0) * ${TWO_POW_M32})`;
  const allPropensities = (indent: string) => {
    for (let j = 0; j < nR; j++) L.push(`${indent}a${j} = ${propensitySource(m, j)};`);
  };
  const sumA = Array.from({ length: nR }, (_, j) => `a${j}`).join(" + ");

  L.push(`"use strict";`);
  L.push(`return function tauKernel(x, rs, grid, nGrid, out, o, B, maxEvents) {`);
  for (let j = 0; j < nR; j++) {
    if (isHill(m, j)) L.push(`  const T${j} = T[${j}], TN${j} = T${j}.length, H${j} = H[${j}], G${j} = G[${j}], GF${j} = GF[${j}];`);
  }
  L.push(`  const rng = new R(rs);`);
  L.push(`  let ra = rs[0] | 0, rb = rs[1] | 0, rc = rs[2] | 0, rd = rs[3] | 0;`);
  for (let i = 0; i < nS; i++) L.push(`  let ${X(i)} = x[${i}];`);
  for (let i = 1; i < nS; i++) L.push(`  const s${i} = ${i} * B;`);
  L.push(`  const tB = ${nS} * B;`);
  L.push(`  let t = 0, g = 0, tg = grid[0], events = 0, tauPrime = Infinity;`);
  L.push(`  let ${Array.from({ length: nR }, (_, j) => `a${j} = 0`).join(", ")};`);
  // The sample at t = 0 is the initial state.
  L.push(`  ${sample} o += tB;`);
  L.push(`  if (++g === nGrid) { ${writeBack} return 0; }`);
  L.push(`  tg = grid[g];`);
  L.push(`  for (;;) {`);
  allPropensities("    ");
  L.push(`    let asum = ${sumA};`);
  L.push(`    if (!(asum > 0)) {`);
  L.push(`      for (;;) { ${sample} o += tB; if (++g === nGrid) { ${writeBack} return events; } tg = grid[g]; }`);
  L.push(`    }`);

  // Critical reactions: within n_c firings of exhausting a reactant (floor(x/|ν|) < n_c ⇔ x < n_c·|ν| for integer x).
  const criticalOf: string[] = [];
  for (let j = 0; j < nR; j++) {
    const conds = changes(j)
      .filter(([, d]) => d < 0)
      .map(([i, d]) => `${X(i)} < ${N_CRITICAL * -d}`);
    criticalOf.push(conds.length ? `c${j}` : "");
    if (conds.length) L.push(`    const c${j} = a${j} > 0 && (${conds.join(" || ")});`);
  }
  const crit = Array.from({ length: nR }, (_, j) => j).filter((j) => criticalOf[j]);
  L.push(`    let acrit = 0;`);
  for (const j of crit) L.push(`    if (c${j}) acrit += a${j};`);

  // g_i (read species only; every term is ≥ 1, so max(1, …) equals ssa/tau.ts's rule).
  const gTerms: string[][] = Array.from({ length: nS }, () => []);
  for (let j = 0; j < nR; j++) {
    const order = m.reactantOrder[j];
    for (let p = m.reactantPtr[j]; p < m.reactantPtr[j + 1]; p++) {
      const i = m.reactantIdx[p];
      gTerms[i].push(m.law[j] !== LawCode.MassAction ? "1" : orderTerm(order, m.reactantNu[p], X(i)));
    }
    if (isHill(m, j)) {
      const i = m.hillInput[j];
      gTerms[i].push(`(${X(i)} < TN${j} ? G${j}[${X(i)}] : GF${j}(${X(i)}))`);
    }
  }
  for (let i = 0; i < nS; i++) {
    if (!isRead[i]) continue;
    const terms = [...new Set(gTerms[i])].filter((s) => s !== "1");
    L.push(`    const g${i} = ${terms.length ? `Math.max(1, ${terms.join(", ")})` : "1"};`);
    L.push(`    let mu${i} = 0, sg${i} = 0;`);
  }
  // μ̂_i and σ̂²_i over non-critical reactions, in reaction order.
  for (let j = 0; j < nR; j++) {
    const body = changes(j)
      .filter(([i]) => isRead[i])
      .map(([i, d]) => `mu${i} += ${formatNumber(d)} * a${j}; sg${i} += ${formatNumber(d * d)} * a${j};`);
    if (!body.length) continue;
    L.push(`    if (${criticalOf[j] ? `!c${j} && ` : ""}a${j} > 0) { ${body.join(" ")} }`);
  }
  L.push(`    tauPrime = Infinity;`);
  for (let i = 0; i < nS; i++) {
    if (!isRead[i]) continue;
    L.push(
      `    { const bd = Math.max((${eps} * ${X(i)}) / g${i}, 1); ` +
        `if (mu${i} !== 0) tauPrime = Math.min(tauPrime, bd / Math.abs(mu${i})); ` +
        `if (sg${i} > 0) tauPrime = Math.min(tauPrime, (bd * bd) / sg${i}); }`,
    );
  }
  // ‖J‖∞ of the drift by one-molecule differences, J[i][k] summed in reaction order.
  const jacNames = new Set<string>();
  const jacLines: string[] = [];
  for (let j = 0; j < nR; j++) {
    const ch = changes(j);
    if (!ch.length) continue;
    for (let p = m.readsPtr[j]; p < m.readsPtr[j + 1]; p++) {
      const k = m.readsIdx[p];
      const plus = propensitySource(m, j, (i) => (i === k ? `(${X(i)} + 1)` : X(i)));
      const adds = ch.map(([i, d]) => {
        jacNames.add(`J${i}_${k}`);
        return `J${i}_${k} += ${formatNumber(d)} * d;`;
      });
      jacLines.push(`    { const d = ${plus} - a${j}; if (d !== 0) { ${adds.join(" ")} } }`);
    }
  }
  if (jacNames.size) {
    L.push(`    let ${[...jacNames].map((n) => `${n} = 0`).join(", ")};`);
    L.push(...jacLines);
    L.push(`    let jn = 0;`);
    for (let i = 0; i < nS; i++) {
      const row: string[] = [];
      for (let k = 0; k < nS; k++) if (jacNames.has(`J${i}_${k}`)) row.push(`Math.abs(J${i}_${k})`);
      if (row.length) L.push(`    { const row = 0 + ${row.join(" + ")}; if (row > jn) jn = row; }`);
    }
    L.push(`    if (jn > 0) tauPrime = Math.min(tauPrime, ${eps} / jn);`);
  }

  // Direct-method steps when a leap would be too short to pay (paper step 4).
  L.push(`    if (tauPrime < ${SSA_FACTOR} / asum) {`);
  // The propensities are current on entry; after an event only its dependents are recomputed
  // (the dependency graph of ssa/kernel.ts), which gives the same values as recomputing all.
  L.push(`      for (let step = 0; step < ${SSA_STEPS}; step++) {`);
  L.push(`        if (step > 0) asum = ${sumA};`);
  L.push(`        const tNext = asum > 0 ? t - Math.log(${uniformPositive}) / asum : Infinity;`);
  L.push(`        while (tg < tNext) { ${sample} o += tB; if (++g === nGrid) { ${writeBack} return events; } tg = grid[g]; }`);
  L.push(`        let r = ${uniform} * asum;`);
  for (let j = 0; j < nR; j++) {
    const cond = j < nR - 1 ? `(r -= a${j}) < 0` : `a${j} > 0`;
    const body = changes(j).map(([i, d]) => `${X(i)} += ${d};`);
    for (let p = m.depPtr[j]; p < m.depPtr[j + 1]; p++) body.push(`a${m.depIdx[p]} = ${propensitySource(m, m.depIdx[p])};`);
    L.push(`        ${j === 0 ? "if" : "else if"} (${cond}) { ${body.join(" ")} }`);
  }
  L.push(`        t = tNext;`);
  L.push(`        if (++events > maxEvents) { ${writeBack} return -1; }`);
  L.push(`      }`);
  L.push(`      continue;`);
  L.push(`    }`);

  // The leap, retried with τ' halved while it would drive a count negative (paper step 6).
  L.push(`    for (;;) {`);
  L.push(`      const tauCrit = acrit > 0 ? -Math.log(${uniformPositive}) / acrit : Infinity;`);
  L.push(`      const toGrid = tg - t;`);
  L.push(`      let tau, fireCritical = false;`);
  L.push(`      if (toGrid <= tauPrime && toGrid <= tauCrit) tau = toGrid;`);
  L.push(`      else if (tauPrime < tauCrit) tau = tauPrime;`);
  L.push(`      else { tau = tauCrit; fireCritical = true; }`);
  for (let j = 0; j < nR; j++) {
    L.push(`      ${poissonSource(j, `${criticalOf[j] ? `!c${j} && ` : ""}a${j} > 0`, uniform, saveRng, loadRng)}`);
  }
  if (crit.length) {
    L.push(`      if (fireCritical) {`);
    L.push(`        let r = ${uniform} * acrit, jc = -1;`);
    L.push(`        do { ${crit.map((j) => `if (c${j}) { jc = ${j}; if ((r -= a${j}) < 0) break; }`).join(" ")} } while (false);`);
    L.push(`        ${crit.map((j) => `if (jc === ${j}) f${j} += 1;`).join(" else ")}`);
    L.push(`      }`);
  }
  const delta: string[][] = Array.from({ length: nS }, () => []);
  for (let j = 0; j < nR; j++) for (const [i, d] of changes(j)) delta[i].push(d === 1 ? `f${j}` : `f${j} * ${d}`);
  for (let i = 0; i < nS; i++) if (delta[i].length) L.push(`      const y${i} = ${X(i)} + (${delta[i].join(" + ")});`);
  const falls = Array.from({ length: nS }, (_, i) => i).filter((i) => canFall[i]);
  if (falls.length) L.push(`      if (${falls.map((i) => `y${i} < 0`).join(" || ")}) { tauPrime = tau / 2; continue; }`);
  for (let i = 0; i < nS; i++) if (delta[i].length) L.push(`      ${X(i)} = y${i};`);
  L.push(`      t = tau === toGrid ? tg : t + tau;`);
  L.push(`      events += ${Array.from({ length: nR }, (_, j) => `f${j}`).join(" + ")};`);
  L.push(`      if (events > maxEvents) { ${writeBack} return -1; }`);
  L.push(`      break;`);
  L.push(`    }`);
  L.push(`    while (tg <= t) { ${sample} o += tB; if (++g === nGrid) { ${writeBack} return events; } tg = grid[g]; }`);
  L.push(`  }`);
  L.push(`};`);
  return L.join("\n");
}

/**
 * Builds the generated tau-leaping kernel of a model (see tauKernelSource); tables, fallbacks, the
 * stream class and the Poisson sampler are passed in as arguments.
 */
export function compileTauKernel(m: Model, opts: TauOptions = {}): DirectKernel {
  const T: (Float64Array | null)[] = [];
  const H: (((x: number) => number) | null)[] = [];
  const G: (Float64Array | null)[] = [];
  const GF: (((x: number) => number) | null)[] = [];
  for (let j = 0; j < m.nReactions; j++) {
    if (!isHill(m, j)) {
      T.push(null);
      H.push(null);
      G.push(null);
      GF.push(null);
      continue;
    }
    const table = hillTable(m, j);
    const sens = new Float64Array(table.length);
    for (let x = 0; x < sens.length; x++) sens[x] = hillSensitivity(m, j, x);
    T.push(table);
    H.push((x: number) => hillPropensity(m, j, x));
    G.push(sens);
    GF.push((x: number) => hillSensitivity(m, j, x));
  }
  const source = tauKernelSource(m, opts.epsilon ?? TAU_EPSILON);
  // Generated from the validated model only (indices and formatted numbers), see the file header.
  const factory = new Function("T", "H", "G", "GF", "P", "R", "POIS", "PC", "PG", "PS", "PL", "PR", source) as (
    t: typeof T,
    h: typeof H,
    g: typeof G,
    gf: typeof GF,
    p: typeof positivePart,
    r: typeof CellRng,
    pois: typeof poisson,
    pc: Float64Array,
    pg: Int32Array,
    ps: Int32Array,
    pl: Int32Array,
    pr: typeof poissonRemainder,
  ) => DirectKernel;
  const t = POISSON_TABLES;
  return factory(T, H, G, GF, positivePart, CellRng, poisson, t.cdf, t.guide, t.start, t.length, poissonRemainder);
}
