/**
 * Rate expressions of the `expression` law: parsed once by mathjs into our own small AST, checked
 * against a whitelist (numbers, species, parameters, + − * / ^, parentheses, exp log sqrt min max
 * pow), then evaluated by a closure tree or turned into kernel source where only array indices and
 * formatted numbers appear. User text never reaches eval or new Function. Pure: no I/O.
 */
import { parse } from "mathjs";

export type Expr =
  | { kind: "num"; value: number }
  | { kind: "species"; id: string }
  | { kind: "param"; id: string }
  | { kind: "neg"; arg: Expr }
  | { kind: "bin"; op: "+" | "-" | "*" | "/" | "^"; left: Expr; right: Expr }
  | { kind: "call"; fn: ExprFunction; args: Expr[] };

export type ExprFunction = "exp" | "log" | "sqrt" | "min" | "max" | "pow";

const FUNCTION_ARITY: Record<ExprFunction, [number, number]> = {
  exp: [1, 1],
  log: [1, 1],
  sqrt: [1, 1],
  min: [1, 64],
  max: [1, 64],
  pow: [2, 2],
};

const BINARY_OPS: Record<string, "+" | "-" | "*" | "/" | "^"> = {
  add: "+",
  subtract: "-",
  multiply: "*",
  divide: "/",
  pow: "^",
};

export interface ExprScope {
  isSpecies(id: string): boolean;
  isParameter(id: string): boolean;
}

export type ParseResult = { ok: true; expr: Expr } | { ok: false; reason: string };

/** Loose shape of the mathjs nodes we accept; every other node type is rejected by name. */
interface MathNode {
  type: string;
  value?: unknown;
  name?: string;
  op?: string;
  fn?: string | { name?: string };
  implicit?: boolean;
  args?: MathNode[];
  content?: MathNode;
}

class ExprReject extends Error {}

/** Parses and checks a rate expression; the reason of a failure is a phrase for `<field>: <reason>`. */
export function parseExpression(text: string, scope: ExprScope): ParseResult {
  if (typeof text !== "string" || text.trim() === "") return { ok: false, reason: "must be a non-empty formula" };
  if (text.length > 4000) return { ok: false, reason: "formula longer than 4000 characters" };
  let node: MathNode;
  try {
    node = parse(text) as unknown as MathNode;
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    return { ok: false, reason: `cannot parse formula (${msg})` };
  }
  try {
    return { ok: true, expr: convert(node, scope, 0) };
  } catch (e) {
    if (e instanceof ExprReject) return { ok: false, reason: e.message };
    throw e;
  }
}

function convert(node: MathNode, scope: ExprScope, depth: number): Expr {
  if (depth > 200) throw new ExprReject("formula nested too deeply");
  switch (node.type) {
    case "ConstantNode": {
      if (typeof node.value !== "number" || !Number.isFinite(node.value)) {
        throw new ExprReject(`only finite numbers may appear as constants, found ${JSON.stringify(node.value)}`);
      }
      return { kind: "num", value: node.value };
    }
    case "SymbolNode": {
      const id = String(node.name);
      if (scope.isSpecies(id)) return { kind: "species", id };
      if (scope.isParameter(id)) return { kind: "param", id };
      throw new ExprReject(`unknown symbol "${id}" (not a species or parameter)`);
    }
    case "ParenthesisNode":
      return convert(node.content as MathNode, scope, depth + 1);
    case "OperatorNode": {
      const fn = typeof node.fn === "string" ? node.fn : "";
      const [first, second, ...rest] = node.args ?? [];
      if (node.implicit) throw new ExprReject(`implicit multiplication is not allowed; write "*"`);
      if (fn === "unaryMinus" && first && !second) return { kind: "neg", arg: convert(first, scope, depth + 1) };
      if (fn === "unaryPlus" && first && !second) return convert(first, scope, depth + 1);
      const op = BINARY_OPS[fn];
      if (op && first && second && rest.length === 0) {
        return { kind: "bin", op, left: convert(first, scope, depth + 1), right: convert(second, scope, depth + 1) };
      }
      throw new ExprReject(`operator "${node.op}" is not allowed (only + - * / ^)`);
    }
    case "FunctionNode": {
      const name = typeof node.fn === "object" && node.fn ? String(node.fn.name) : "";
      if (!Object.prototype.hasOwnProperty.call(FUNCTION_ARITY, name)) {
        throw new ExprReject(`function "${name}" is not allowed (only exp, log, sqrt, min, max, pow)`);
      }
      const fn = name as ExprFunction;
      const args = node.args ?? [];
      const [lo, hi] = FUNCTION_ARITY[fn];
      if (args.length < lo || args.length > hi) {
        throw new ExprReject(`${fn}() takes ${lo === hi ? lo : `${lo} to ${hi}`} argument${hi === 1 ? "" : "s"}, got ${args.length}`);
      }
      return { kind: "call", fn, args: args.map((a) => convert(a, scope, depth + 1)) };
    }
    default:
      throw new ExprReject(`${describeNode(node.type)} is not allowed in a rate formula`);
  }
}

function describeNode(type: string): string {
  const names: Record<string, string> = {
    AccessorNode: "property access",
    ArrayNode: "an array",
    AssignmentNode: "assignment",
    BlockNode: "a block of statements",
    ConditionalNode: "a conditional",
    FunctionAssignmentNode: "a function definition",
    IndexNode: "indexing",
    ObjectNode: "an object",
    RangeNode: "a range",
    RelationalNode: "a comparison",
  };
  return names[type] ?? `a ${type}`;
}

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
