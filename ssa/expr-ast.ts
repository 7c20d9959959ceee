/**
 * The AST of rate formulas (the `expression` law) and what the engine does with it: species and
 * parameter references, a closure-tree evaluator, and kernel source where only array indices and
 * formatted numbers appear. Parsing (mathjs) lives in ssa/expr.ts, so that worker threads, which
 * receive parsed formulas, never load the parser. Pure: no I/O.
 */

/**
 * A formula node. Numbers: num, species, param, time, neg, bin, call, piecewise. Conditions
 * (true or false, never a number; the parser checks which is which): bool, cmp, logic, not.
 * `piecewise` is the value of the first piece whose condition holds, else `otherwise`; with no
 * `otherwise` and no piece holding its value is undefined (NaN), as SBML's piecewise.
 */
export type Expr =
  | { kind: "num"; value: number }
  | { kind: "species"; id: string }
  | { kind: "param"; id: string }
  | { kind: "time" }
  | { kind: "neg"; arg: Expr }
  | { kind: "bin"; op: "+" | "-" | "*" | "/" | "^"; left: Expr; right: Expr }
  | { kind: "call"; fn: ExprFunction; args: Expr[] }
  | { kind: "piecewise"; pieces: { value: Expr; cond: Expr }[]; otherwise: Expr | null }
  | { kind: "bool"; value: boolean }
  | { kind: "cmp"; op: CmpOp; left: Expr; right: Expr }
  | { kind: "logic"; op: "and" | "or" | "xor"; left: Expr; right: Expr }
  | { kind: "not"; arg: Expr };

export type ExprFunction = "exp" | "log" | "sqrt" | "min" | "max" | "pow";

export type CmpOp = "<" | "<=" | ">" | ">=" | "==" | "!=";

/** The name of model time in formulas (when the circuit declares no species or parameter `t`). */
export const TIME_SYMBOL = "t";

/** Whether a node is a condition (true/false) rather than a number. */
export function isCondition(e: Expr): boolean {
  return e.kind === "bool" || e.kind === "cmp" || e.kind === "logic" || e.kind === "not";
}

/** The direct children of a node, in reading order (a piecewise: value, condition, …, otherwise). */
export function exprChildren(e: Expr): Expr[] {
  switch (e.kind) {
    case "neg":
    case "not":
      return [e.arg];
    case "bin":
    case "cmp":
    case "logic":
      return [e.left, e.right];
    case "call":
      return e.args;
    case "piecewise": {
      const out: Expr[] = [];
      for (const p of e.pieces) out.push(p.value, p.cond);
      if (e.otherwise) out.push(e.otherwise);
      return out;
    }
    default:
      return [];
  }
}

/** Whether an expression reads model time `t` anywhere. */
export function expressionReadsTime(e: Expr): boolean {
  if (e.kind === "time") return true;
  for (const c of exprChildren(e)) if (expressionReadsTime(c)) return true;
  return false;
}

/**
 * Bounds of one rate formula, for typed formulas and for those the SBML import builds by
 * expanding function definitions and rules. They keep parsing, checking and the engine's per-event
 * evaluation cheap, and keep the recursive walks over a formula (here, ssa/expr.ts, ssa/sbml-math.ts)
 * far from the stack limit: a formula is at most `maxChars` long, has at most `maxNodes` nodes
 * (numbers, symbols, operators, calls) and nests at most `maxDepth` deep (parentheses at most
 * `maxParens` deep in the text, checked before the parser's own recursion sees them).
 */
export const FORMULA_LIMITS = { maxChars: 4000, maxNodes: 2000, maxDepth: 200, maxParens: 100 } as const;

/** Species ids referenced by an expression, in order of first appearance. */
export function expressionSpecies(expr: Expr, out: string[] = []): string[] {
  switch (expr.kind) {
    case "species":
      if (!out.includes(expr.id)) out.push(expr.id);
      break;
    default:
      for (const c of exprChildren(expr)) expressionSpecies(c, out);
      break;
  }
  return out;
}

/** Parameter names referenced by an expression, in order of first appearance. */
export function expressionParameters(expr: Expr, out: string[] = []): string[] {
  switch (expr.kind) {
    case "param":
      if (!out.includes(expr.id)) out.push(expr.id);
      break;
    default:
      for (const c of exprChildren(expr)) expressionParameters(c, out);
      break;
  }
  return out;
}

/** Evaluator over a species vector and the time: species read `y[index] * scale`, parameters inlined, `t` the model time. */
export type ExprEvaluator = (y: Float64Array, t: number) => number;

/** A condition's evaluator, same arguments. */
export type TruthEvaluator = (y: Float64Array, t: number) => boolean;

/**
 * Compiles an expression to a closure tree. `speciesIndex` maps ids to positions of `y`;
 * `scale` multiplies every species read (1/Ω turns counts into model amounts).
 * @throws TypeError for a condition where a number belongs (the parser never builds one).
 */
export function compileExpression(
  expr: Expr,
  speciesIndex: ReadonlyMap<string, number>,
  params: ReadonlyMap<string, number>,
  scale = 1,
): ExprEvaluator {
  const num = (e: Expr) => compileExpression(e, speciesIndex, params, scale);
  switch (expr.kind) {
    case "num": {
      const v = expr.value;
      return () => v;
    }
    case "param": {
      const v = params.get(expr.id) as number;
      return () => v;
    }
    case "species": {
      const i = speciesIndex.get(expr.id) as number;
      return scale === 1 ? (y) => y[i] as number : (y) => (y[i] as number) * scale;
    }
    case "time":
      return (_y, t) => t;
    case "neg": {
      const a = num(expr.arg);
      return (y, t) => -a(y, t);
    }
    case "bin": {
      const l = num(expr.left);
      const r = num(expr.right);
      switch (expr.op) {
        case "+":
          return (y, t) => l(y, t) + r(y, t);
        case "-":
          return (y, t) => l(y, t) - r(y, t);
        case "*":
          return (y, t) => l(y, t) * r(y, t);
        case "/":
          return (y, t) => l(y, t) / r(y, t);
        case "^":
          return (y, t) => Math.pow(l(y, t), r(y, t));
      }
      break;
    }
    case "call": {
      const args = expr.args.map(num);
      const [a0, a1] = args;
      if (!a0) break;
      switch (expr.fn) {
        case "exp":
          return (y, t) => Math.exp(a0(y, t));
        case "log":
          return (y, t) => Math.log(a0(y, t));
        case "sqrt":
          return (y, t) => Math.sqrt(a0(y, t));
        case "pow":
          if (!a1) break;
          return (y, t) => Math.pow(a0(y, t), a1(y, t));
        case "min":
          return (y, t) => {
            let m = a0(y, t);
            for (const f of args) m = Math.min(m, f(y, t));
            return m;
          };
        case "max":
          return (y, t) => {
            let m = a0(y, t);
            for (const f of args) m = Math.max(m, f(y, t));
            return m;
          };
      }
      break;
    }
    case "piecewise": {
      const values = expr.pieces.map((p) => num(p.value));
      const conds = expr.pieces.map((p) => compileTruth(p.cond, speciesIndex, params, scale));
      const otherwise: ExprEvaluator = expr.otherwise ? num(expr.otherwise) : () => NaN;
      const n = values.length;
      // The first piece whose condition holds, in order (the generated kernels' nested ternaries).
      return (y, t) => {
        for (let k = 0; k < n; k++) if ((conds[k] as TruthEvaluator)(y, t)) return (values[k] as ExprEvaluator)(y, t);
        return otherwise(y, t);
      };
    }
    default:
      break;
  }
  throw new TypeError(`compileExpression: unexpected node ${JSON.stringify(expr)}`);
}

/**
 * Compiles a condition (bool, cmp, logic, not) to a closure tree, with compileExpression's arguments.
 * @throws TypeError for a number where a condition belongs (the parser never builds one).
 */
export function compileTruth(
  expr: Expr,
  speciesIndex: ReadonlyMap<string, number>,
  params: ReadonlyMap<string, number>,
  scale = 1,
): TruthEvaluator {
  const truth = (e: Expr) => compileTruth(e, speciesIndex, params, scale);
  switch (expr.kind) {
    case "bool": {
      const v = expr.value;
      return () => v;
    }
    case "cmp": {
      const l = compileExpression(expr.left, speciesIndex, params, scale);
      const r = compileExpression(expr.right, speciesIndex, params, scale);
      switch (expr.op) {
        case "<":
          return (y, t) => l(y, t) < r(y, t);
        case "<=":
          return (y, t) => l(y, t) <= r(y, t);
        case ">":
          return (y, t) => l(y, t) > r(y, t);
        case ">=":
          return (y, t) => l(y, t) >= r(y, t);
        case "==":
          return (y, t) => l(y, t) === r(y, t);
        case "!=":
          return (y, t) => l(y, t) !== r(y, t);
      }
      break;
    }
    case "logic": {
      const l = truth(expr.left);
      const r = truth(expr.right);
      switch (expr.op) {
        case "and":
          return (y, t) => l(y, t) && r(y, t);
        case "or":
          return (y, t) => l(y, t) || r(y, t);
        case "xor":
          return (y, t) => l(y, t) !== r(y, t);
      }
      break;
    }
    case "not": {
      const a = truth(expr.arg);
      return (y, t) => !a(y, t);
    }
    default:
      break;
  }
  throw new TypeError(`compileTruth: unexpected node ${JSON.stringify(expr)}`);
}

/** Formats a finite number as a JS literal that round-trips exactly (no user text reaches code). */
export function formatNumber(v: number): string {
  if (!Number.isFinite(v)) {
    if (Number.isNaN(v)) return "NaN";
    return v > 0 ? "Infinity" : "-Infinity";
  }
  const s = String(v);
  return v < 0 || Object.is(v, -0) ? `(${s})` : s;
}

/**
 * Kernel source for an expression: `speciesRef(index)` returns the code that reads species
 * `index` (built by the caller from integers only); parameters and constants become formatted
 * numbers; functions come from a fixed whitelist.
 */
export function expressionSource(
  expr: Expr,
  speciesIndex: ReadonlyMap<string, number>,
  params: ReadonlyMap<string, number>,
  speciesRef: (index: number) => string,
): string {
  const go = (e: Expr): string => {
    switch (e.kind) {
      case "num":
        return formatNumber(e.value);
      case "param":
        return formatNumber(params.get(e.id) as number);
      case "species": {
        const i = speciesIndex.get(e.id);
        if (i === undefined || !Number.isInteger(i)) throw new TypeError(`expressionSource: unknown species`);
        return `(${speciesRef(i)})`;
      }
      case "time":
        // Kernels run stochastic methods, which refuse time-dependent rates before compiling one.
        throw new TypeError("expressionSource: a kernel cannot read time t");
      case "neg":
        return `(-${go(e.arg)})`;
      case "bin":
        return e.op === "^" ? `Math.pow(${go(e.left)}, ${go(e.right)})` : `(${go(e.left)} ${e.op} ${go(e.right)})`;
      case "call": {
        const fn = { exp: "Math.exp", log: "Math.log", sqrt: "Math.sqrt", pow: "Math.pow", min: "Math.min", max: "Math.max" }[e.fn];
        return `${fn}(${e.args.map(go).join(", ")})`;
      }
      case "piecewise": {
        // c1 ? v1 : (c2 ? v2 : otherwise): the closure evaluator's order, first true piece wins.
        let s = e.otherwise ? go(e.otherwise) : "NaN";
        for (let k = e.pieces.length - 1; k >= 0; k--) s = `(${go(e.pieces[k].cond)} ? ${go(e.pieces[k].value)} : ${s})`;
        return s;
      }
      case "bool":
        return e.value ? "true" : "false";
      case "cmp": {
        const op = e.op === "==" ? "===" : e.op === "!=" ? "!==" : e.op;
        return `(${go(e.left)} ${op} ${go(e.right)})`;
      }
      case "logic":
        return `(${go(e.left)} ${e.op === "and" ? "&&" : e.op === "or" ? "||" : "!=="} ${go(e.right)})`;
      case "not":
        return `(!${go(e.arg)})`;
    }
  };
  return go(expr);
}

/**
 * Times at which a condition on time alone switches: for each comparison whose sides are linear in
 * `t` with constant coefficients (a·t + b, built of numbers, parameters, t, −, + − and * / by a
 * constant; e.g. `t < 50`, `t * 0.0417 >= 20`, `t - t_on > 0`), the t where its sides meet. The ODE
 * stops its steps there (ssa/ode.ts), so a jump in time is met exactly rather than left to the
 * step-size control. Comparisons that read species, or time non-linearly, give none. Appends to `out`.
 */
export function timeBreakpoints(e: Expr, params: ReadonlyMap<string, number>, out: number[] = []): number[] {
  if (e.kind === "cmp") {
    const l = linearInTime(e.left, params);
    const r = linearInTime(e.right, params);
    if (l && r && l[0] !== r[0]) {
      const root = (r[1] - l[1]) / (l[0] - r[0]);
      if (Number.isFinite(root)) out.push(root);
    }
  }
  for (const c of exprChildren(e)) timeBreakpoints(c, params, out);
  return out;
}

/** [a, b] with e = a·t + b for every t, or null when e reads a species or is not linear in t. */
function linearInTime(e: Expr, params: ReadonlyMap<string, number>): [number, number] | null {
  switch (e.kind) {
    case "num":
      return [0, e.value];
    case "param":
      return [0, params.get(e.id) as number];
    case "time":
      return [1, 0];
    case "neg": {
      const a = linearInTime(e.arg, params);
      return a && [-a[0], -a[1]];
    }
    case "bin": {
      const l = linearInTime(e.left, params);
      const r = linearInTime(e.right, params);
      if (!l || !r) return null;
      switch (e.op) {
        case "+":
          return [l[0] + r[0], l[1] + r[1]];
        case "-":
          return [l[0] - r[0], l[1] - r[1]];
        case "*":
          if (l[0] !== 0 && r[0] !== 0) return null;
          return [l[0] * r[1] + r[0] * l[1], l[1] * r[1]];
        case "/":
          return r[0] !== 0 ? null : [l[0] / r[1], l[1] / r[1]];
        case "^":
          return l[0] === 0 && r[0] === 0 ? [0, Math.pow(l[1], r[1])] : null;
      }
      break;
    }
    default:
      break;
  }
  return null;
}
