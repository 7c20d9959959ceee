/**
 * Rate expressions of the `expression` law: parsed once by mathjs (its number-only build, so
 * literals are plain doubles) into our own small AST (ssa/expr-ast.ts), checked against a whitelist
 * (numbers, species, parameters, the time `t`, + − * / ^, parentheses, exp log sqrt min max pow,
 * piecewise, and inside piecewise conditions the relations < <= > >= == != with `and`, `or`,
 * `xor`, `not`, `true`, `false`; the words of ssa/condition.ts, which mathjs reads too). Numbers
 * and conditions are kept apart: a condition is never a number, nor a number a condition. User
 * text never reaches eval or new Function. Pure: no I/O.
 */
import { parse } from "mathjs/number";

import { FORMULA_LIMITS, TIME_SYMBOL, isCondition, type CmpOp, type Expr, type ExprFunction } from "./expr-ast";

export * from "./expr-ast";

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

const RELATIONS: Record<string, CmpOp> = {
  smaller: "<",
  smallerEq: "<=",
  larger: ">",
  largerEq: ">=",
  equal: "==",
  unequal: "!=",
};

/** Pieces a piecewise may have: bounded like min/max's arguments. */
export const MAX_PIECES = 64;

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
  if (text.length > FORMULA_LIMITS.maxChars) return { ok: false, reason: `formula longer than ${FORMULA_LIMITS.maxChars} characters` };
  if (parenthesisDepth(text) > FORMULA_LIMITS.maxParens) {
    return { ok: false, reason: `formula has parentheses nested more than ${FORMULA_LIMITS.maxParens} deep` };
  }
  let node: MathNode;
  try {
    node = parse(text) as unknown as MathNode;
  } catch (e) {
    // The parser recurses per operator; a stack overflow is a formula nested too deeply, not a fault.
    if (e instanceof RangeError) return { ok: false, reason: `formula nested more than ${FORMULA_LIMITS.maxDepth} deep` };
    const msg = e instanceof Error ? e.message : String(e);
    return { ok: false, reason: `cannot parse formula (${msg})` };
  }
  try {
    const budget = { nodes: 0 };
    const expr = convert(node, scope, 0, budget);
    if (isCondition(expr)) throw new ExprReject(`a condition (${clip(text)}) cannot be a rate; use piecewise(value, condition, otherwise)`);
    return { ok: true, expr };
  } catch (e) {
    if (e instanceof ExprReject) return { ok: false, reason: e.message };
    throw e;
  }
}

/** Deepest nesting of ( [ { in a formula's text. */
function parenthesisDepth(text: string): number {
  let depth = 0;
  let max = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 40 || c === 91 || c === 123) max = Math.max(max, ++depth);
    else if (c === 41 || c === 93 || c === 125) depth = Math.max(0, depth - 1);
  }
  return max;
}

/** A formula's text for a message: trimmed, and cut at 60 characters. */
function clip(text: string): string {
  const s = text.trim().replace(/\s+/g, " ");
  return s.length > 60 ? `${s.slice(0, 57)}...` : s;
}

/** A short rendering of a mathjs node for messages. */
function show(node: MathNode): string {
  if (node.type === "ParenthesisNode" && node.content) return show(node.content);
  try {
    return clip((node as unknown as { toString(): string }).toString());
  } catch {
    return "…";
  }
}

function convert(node: MathNode, scope: ExprScope, depth: number, budget: { nodes: number }): Expr {
  if (depth > FORMULA_LIMITS.maxDepth) throw new ExprReject(`formula nested more than ${FORMULA_LIMITS.maxDepth} deep`);
  // Parentheses are no node of ours (their nesting is bounded in the text); everything else counts.
  if (node.type !== "ParenthesisNode" && ++budget.nodes > FORMULA_LIMITS.maxNodes) {
    throw new ExprReject(`formula has more than ${FORMULA_LIMITS.maxNodes} terms (numbers, symbols, operators and calls)`);
  }
  const go = (n: MathNode) => convert(n, scope, depth + 1, budget);
  // Where a number belongs (an operand, an argument, a piece's value), a condition is refused, and the reverse.
  const number = (n: MathNode, where: string): Expr => {
    const e = go(n);
    if (isCondition(e)) throw new ExprReject(`a condition (${show(n)}) cannot be used as a number in ${where}; use piecewise(value, condition, otherwise)`);
    return e;
  };
  const condition = (n: MathNode, where: string): Expr => {
    const e = go(n);
    if (!isCondition(e)) throw new ExprReject(`${where} needs a condition such as A > 5, found the number ${show(n)}`);
    return e;
  };
  switch (node.type) {
    case "ConstantNode": {
      if (typeof node.value === "boolean") return { kind: "bool", value: node.value };
      if (typeof node.value !== "number" || !Number.isFinite(node.value)) {
        throw new ExprReject(`only finite numbers may appear as constants, found ${JSON.stringify(node.value)}`);
      }
      return { kind: "num", value: node.value };
    }
    case "SymbolNode": {
      const id = String(node.name);
      if (scope.isSpecies(id)) return { kind: "species", id };
      if (scope.isParameter(id)) return { kind: "param", id };
      // A species or parameter named t is that symbol (circuits written before time existed keep their meaning).
      if (id === TIME_SYMBOL) return { kind: "time" };
      throw new ExprReject(`unknown symbol "${id}" (not a species or parameter)`);
    }
    case "ParenthesisNode":
      return convert(node.content as MathNode, scope, depth, budget);
    case "OperatorNode": {
      const fn = typeof node.fn === "string" ? node.fn : "";
      const [first, second, ...rest] = node.args ?? [];
      if (node.implicit) throw new ExprReject(`implicit multiplication is not allowed; write "*"`);
      if (fn === "unaryMinus" && first && !second) return { kind: "neg", arg: number(first, `"-"`) };
      if (fn === "unaryPlus" && first && !second) return number(first, `"+"`);
      if (fn === "not" && first && !second) {
        const arg = go(first);
        if (!isCondition(arg)) throw new ExprReject(`"not" needs a condition, found the number ${show(first)}; write not (A > 5), with parentheses`);
        return { kind: "not", arg };
      }
      const op = BINARY_OPS[fn];
      if (op && first && second && rest.length === 0) {
        return { kind: "bin", op, left: number(first, `"${op}"`), right: number(second, `"${op}"`) };
      }
      const rel = RELATIONS[fn];
      if (rel && first && second && rest.length === 0) {
        return { kind: "cmp", op: rel, left: number(first, `"${rel}"`), right: number(second, `"${rel}"`) };
      }
      if ((fn === "and" || fn === "or" || fn === "xor") && first && second && rest.length === 0) {
        return { kind: "logic", op: fn, left: condition(first, `"${fn}"`), right: condition(second, `"${fn}"`) };
      }
      if (fn === "factorial") throw new ExprReject(`"!" is not allowed; write "not (…)" to negate a condition, or "!=" for unequal`);
      throw new ExprReject(`operator "${node.op}" is not allowed (only + - * / ^, relations < <= > >= == !=, and, or, xor, not)`);
    }
    case "FunctionNode": {
      const name = typeof node.fn === "object" && node.fn ? String(node.fn.name) : "";
      if (name === "piecewise") return convertPiecewise(node.args ?? [], number, condition);
      if (!Object.prototype.hasOwnProperty.call(FUNCTION_ARITY, name)) {
        throw new ExprReject(`function "${name}" is not allowed (only exp, log, sqrt, min, max, pow, piecewise)`);
      }
      const fn = name as ExprFunction;
      const args = node.args ?? [];
      const [lo, hi] = FUNCTION_ARITY[fn];
      if (args.length < lo || args.length > hi) {
        throw new ExprReject(`${fn}() takes ${lo === hi ? lo : `${lo} to ${hi}`} argument${hi === 1 ? "" : "s"}, got ${args.length}`);
      }
      return { kind: "call", fn, args: args.map((a) => number(a, `${fn}()`)) };
    }
    case "RelationalNode":
      throw new ExprReject(`a chained comparison (${show(node)}) is not allowed; write (a < b) and (b < c)`);
    case "ConditionalNode":
      throw new ExprReject(`"a ? b : c" is not allowed; write piecewise(b, a, c)`);
    default:
      throw new ExprReject(`${describeNode(node.type)} is not allowed in a rate formula`);
  }
}

/**
 * piecewise(value1, cond1, value2, cond2, …, otherwise): pairs of a value and its condition, the
 * first pair whose condition holds giving the value, and an optional last value for none.
 */
function convertPiecewise(args: MathNode[], number: (n: MathNode, where: string) => Expr, condition: (n: MathNode, where: string) => Expr): Expr {
  if (args.length < 2) throw new ExprReject(`piecewise() takes a value and a condition, then more pairs, then an optional otherwise value: piecewise(1, A < 10, 0); got ${args.length} argument${args.length === 1 ? "" : "s"}`);
  if (args.length > 2 * MAX_PIECES + 1) throw new ExprReject(`piecewise() takes at most ${MAX_PIECES} pieces, got ${Math.floor(args.length / 2)}`);
  const pieces: { value: Expr; cond: Expr }[] = [];
  for (let k = 0; k + 1 < args.length; k += 2) {
    const value = number(args[k] as MathNode, `piecewise() argument ${k + 1} (a value)`);
    const cond = condition(args[k + 1] as MathNode, `piecewise() argument ${k + 2}`);
    pieces.push({ value, cond });
  }
  const otherwise = args.length % 2 === 1 ? number(args[args.length - 1] as MathNode, `piecewise()'s last argument (otherwise)`) : null;
  return { kind: "piecewise", pieces, otherwise };
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

