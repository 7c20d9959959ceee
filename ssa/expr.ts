/**
 * Rate expressions of the `expression` law: parsed once by mathjs (its number-only build, so
 * literals are plain doubles) into our own small AST (ssa/expr-ast.ts), checked against a whitelist
 * (numbers, species, parameters, + − * / ^, parentheses, exp log sqrt min max pow). User text never
 * reaches eval or new Function. Pure: no I/O.
 */
import { parse } from "mathjs/number";

import { FORMULA_LIMITS, type Expr, type ExprFunction } from "./expr-ast";

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
    return { ok: true, expr: convert(node, scope, 0, budget) };
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

function convert(node: MathNode, scope: ExprScope, depth: number, budget: { nodes: number }): Expr {
  if (depth > FORMULA_LIMITS.maxDepth) throw new ExprReject(`formula nested more than ${FORMULA_LIMITS.maxDepth} deep`);
  // Parentheses are no node of ours (their nesting is bounded in the text); everything else counts.
  if (node.type !== "ParenthesisNode" && ++budget.nodes > FORMULA_LIMITS.maxNodes) {
    throw new ExprReject(`formula has more than ${FORMULA_LIMITS.maxNodes} terms (numbers, symbols, operators and calls)`);
  }
  const go = (n: MathNode) => convert(n, scope, depth + 1, budget);
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
      return convert(node.content as MathNode, scope, depth, budget);
    case "OperatorNode": {
      const fn = typeof node.fn === "string" ? node.fn : "";
      const [first, second, ...rest] = node.args ?? [];
      if (node.implicit) throw new ExprReject(`implicit multiplication is not allowed; write "*"`);
      if (fn === "unaryMinus" && first && !second) return { kind: "neg", arg: go(first) };
      if (fn === "unaryPlus" && first && !second) return go(first);
      const op = BINARY_OPS[fn];
      if (op && first && second && rest.length === 0) {
        return { kind: "bin", op, left: go(first), right: go(second) };
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
      return { kind: "call", fn, args: args.map(go) };
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

