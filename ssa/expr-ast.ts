/**
 * The AST of rate formulas (the `expression` law) and what the engine does with it: species and
 * parameter references, a closure-tree evaluator, and kernel source where only array indices and
 * formatted numbers appear. Parsing (mathjs) lives in ssa/expr.ts, so that worker threads, which
 * receive parsed formulas, never load the parser. Pure: no I/O.
 */

export type Expr =
  | { kind: "num"; value: number }
  | { kind: "species"; id: string }
  | { kind: "param"; id: string }
  | { kind: "neg"; arg: Expr }
  | { kind: "bin"; op: "+" | "-" | "*" | "/" | "^"; left: Expr; right: Expr }
  | { kind: "call"; fn: ExprFunction; args: Expr[] };

export type ExprFunction = "exp" | "log" | "sqrt" | "min" | "max" | "pow";

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
    case "neg":
      expressionSpecies(expr.arg, out);
      break;
    case "bin":
      expressionSpecies(expr.left, out);
      expressionSpecies(expr.right, out);
      break;
    case "call":
      for (const a of expr.args) expressionSpecies(a, out);
      break;
    default:
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
    case "neg":
      expressionParameters(expr.arg, out);
      break;
    case "bin":
      expressionParameters(expr.left, out);
      expressionParameters(expr.right, out);
      break;
    case "call":
      for (const a of expr.args) expressionParameters(a, out);
      break;
    default:
      break;
  }
  return out;
}

/** Evaluator over a species vector: species read `y[index] * scale`, parameters inlined. */
export type ExprEvaluator = (y: Float64Array) => number;

/**
 * Compiles an expression to a closure tree. `speciesIndex` maps ids to positions of `y`;
 * `scale` multiplies every species read (1/Ω turns counts into model amounts).
 */
export function compileExpression(
  expr: Expr,
  speciesIndex: ReadonlyMap<string, number>,
  params: ReadonlyMap<string, number>,
  scale = 1,
): ExprEvaluator {
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
    case "neg": {
      const a = compileExpression(expr.arg, speciesIndex, params, scale);
      return (y) => -a(y);
    }
    case "bin": {
      const l = compileExpression(expr.left, speciesIndex, params, scale);
      const r = compileExpression(expr.right, speciesIndex, params, scale);
      switch (expr.op) {
        case "+":
          return (y) => l(y) + r(y);
        case "-":
          return (y) => l(y) - r(y);
        case "*":
          return (y) => l(y) * r(y);
        case "/":
          return (y) => l(y) / r(y);
        case "^":
          return (y) => Math.pow(l(y), r(y));
      }
      break;
    }
    case "call": {
      const args = expr.args.map((a) => compileExpression(a, speciesIndex, params, scale));
      const [a0, a1] = args;
      if (!a0) break;
      switch (expr.fn) {
        case "exp":
          return (y) => Math.exp(a0(y));
        case "log":
          return (y) => Math.log(a0(y));
        case "sqrt":
          return (y) => Math.sqrt(a0(y));
        case "pow":
          if (!a1) break;
          return (y) => Math.pow(a0(y), a1(y));
        case "min":
          return (y) => {
            let m = a0(y);
            for (const f of args) m = Math.min(m, f(y));
            return m;
          };
        case "max":
          return (y) => {
            let m = a0(y);
            for (const f of args) m = Math.max(m, f(y));
            return m;
          };
      }
    }
  }
  throw new TypeError(`compileExpression: unexpected node ${JSON.stringify(expr)}`);
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
      case "neg":
        return `(-${go(e.arg)})`;
      case "bin":
        return e.op === "^" ? `Math.pow(${go(e.left)}, ${go(e.right)})` : `(${go(e.left)} ${e.op} ${go(e.right)})`;
      case "call": {
        const fn = { exp: "Math.exp", log: "Math.log", sqrt: "Math.sqrt", pow: "Math.pow", min: "Math.min", max: "Math.max" }[e.fn];
        return `${fn}(${e.args.map(go).join(", ")})`;
      }
    }
  };
  return go(expr);
}
