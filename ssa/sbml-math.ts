/**
 * MathML (the SBML subset) to and from our formulas. Reading turns the parsed XML of a <math>
 * element into a small AST (`MathAst`); writing turns a rate law or a parsed `expression`
 * (ssa/expr.ts) into MathML text. Formulas are printed for the circuit's `expression` law and
 * re-parsed by ssa/expr.ts there, so user text only ever travels as data. Pure: no I/O.
 */
import { FORMULA_LIMITS, TIME_SYMBOL, type Expr } from "./expr-ast";

/** A node of fast-xml-parser's `preserveOrder` output: { tag: children, ":@"?: attributes }. */
export type XmlNode = Record<string, unknown>;

export type MathAst =
  | { t: "num"; v: number }
  | { t: "ci"; id: string }
  | { t: "apply"; op: string; args: MathAst[]; degree?: MathAst; logbase?: MathAst }
  | { t: "call"; fn: string; args: MathAst[] }
  | { t: "piecewise"; pieces: { value: MathAst; cond: MathAst }[]; otherwise?: MathAst }
  | { t: "csymbol"; name: string }
  | { t: "const"; name: string }
  | { t: "lambda"; params: string[]; body: MathAst };

/** A MathML problem; the caller prefixes where it happened (`reaction "r3" kineticLaw: …`). */
export class MathError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "MathError";
  }
}

export function tagOf(node: XmlNode): string {
  for (const k of Object.keys(node)) if (k !== ":@") return k;
  return "";
}

export function childrenOf(node: XmlNode): XmlNode[] {
  const v = node[tagOf(node)];
  return Array.isArray(v) ? (v as XmlNode[]) : [];
}

export function attrsOf(node: XmlNode): Record<string, string> {
  const a = node[":@"];
  return a && typeof a === "object" ? (a as Record<string, string>) : {};
}

/** Concatenated text of a node's direct text children. */
export function textOf(node: XmlNode): string {
  return childrenOf(node)
    .filter((c) => tagOf(c) === "#text")
    .map((c) => String(c["#text"]))
    .join("")
    .trim();
}

const elements = (node: XmlNode) => childrenOf(node).filter((c) => tagOf(c) !== "#text" && tagOf(c) !== "#comment");

/** Operators we read (MathML content elements of SBML Level 2/3 core). */
const OPERATORS = new Set([
  "plus", "minus", "times", "divide", "power", "exp", "ln", "log", "root", "abs", "min", "max",
  "floor", "ceiling", "factorial", "rem", "quotient", "implies",
  "eq", "neq", "gt", "lt", "geq", "leq", "and", "or", "xor", "not",
  "sin", "cos", "tan", "sec", "csc", "cot", "sinh", "cosh", "tanh", "sech", "csch", "coth",
  "arcsin", "arccos", "arctan", "arcsec", "arccsc", "arccot", "arcsinh", "arccosh", "arctanh", "arcsech", "arccsch", "arccoth",
]);

/**
 * How deep MathML may nest. No kinetic law comes near it; the bound keeps the recursive readers
 * and printers here far from the stack limit, and the printed formula within FORMULA_LIMITS.
 */
export const MAX_MATHML_DEPTH = 100;

/**
 * Bounds of expanding MathML into formulas, where function definitions and assignment rules are
 * inlined: each formula as FORMULA_LIMITS (the `expression` law could not hold a larger one anyway),
 * and `maxSteps` nodes translated for the whole model, so that no file makes the import do work
 * out of proportion to its size (a chain of definitions each calling the previous one twice
 * doubles the formula at every link).
 */
export const EXPANSION_LIMITS = { maxNodes: FORMULA_LIMITS.maxNodes, maxDepth: FORMULA_LIMITS.maxDepth, maxSteps: 2_000_000 } as const;

/** A formula that grows past EXPANSION_LIMITS, or an import past its time budget. */
export class ExpansionError extends MathError {
  /** The function definition whose expansion was too large, once known. */
  fn?: string;
  constructor(message: string, readonly kind: "size" | "budget") {
    super(message);
    this.name = "ExpansionError";
  }
}

/** Work shared by every translation of one import: steps taken, and a time check from the caller. */
export interface ExpansionBudget {
  steps: number;
  /** True once the caller's time budget is spent (ssa/ has no clock of its own). */
  overTime?: () => boolean;
  /** What overTime's budget was, for the message (e.g. "10 s"). */
  timeBudget?: string;
}

/** Parses the single content child of a <math> element. */
export function readMath(math: XmlNode): MathAst {
  const kids = elements(math);
  if (kids.length !== 1) throw new MathError(`<math> must hold exactly one expression, found ${kids.length}`);
  return readNode(kids[0], 0);
}

function readNumber(node: XmlNode): number {
  const type = attrsOf(node).type ?? "real";
  const parts = childrenOf(node)
    .filter((c) => tagOf(c) === "#text")
    .map((c) => String(c["#text"]).trim());
  const num = (s: string | undefined): number => {
    const v = s !== undefined && /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s) ? Number(s) : NaN;
    if (!Number.isFinite(v)) {
      if (s === "INF" || s === "-INF" || s === "NaN") throw new MathError(`<cn> value "${s}" is not a finite number`);
      throw new MathError(`<cn> holds "${s ?? ""}", not a number`);
    }
    return v;
  };
  switch (type) {
    case "real":
    case "double":
    case "integer":
      return num(parts.join(""));
    case "e-notation":
      return num(`${parts[0]}e${parts[1]}`);
    case "rational":
      return num(parts[0]) / num(parts[1]);
    default:
      throw new MathError(`<cn type="${type}"> is not supported`);
  }
}

function readNode(node: XmlNode, depth: number): MathAst {
  if (depth > MAX_MATHML_DEPTH) throw new MathError(`MathML nested more than ${MAX_MATHML_DEPTH} deep`);
  const tag = tagOf(node);
  switch (tag) {
    case "cn":
      return { t: "num", v: readNumber(node) };
    case "ci": {
      const id = textOf(node);
      if (!/^[A-Za-z_][A-Za-z0-9_]*$/.test(id)) throw new MathError(`<ci> "${id}" is not a valid identifier`);
      return { t: "ci", id };
    }
    case "csymbol": {
      const url = attrsOf(node).definitionURL ?? "";
      const name = url.slice(url.lastIndexOf("/") + 1);
      return { t: "csymbol", name: name || textOf(node) };
    }
    case "pi":
    case "exponentiale":
    case "true":
    case "false":
    case "infinity":
    case "notanumber":
      return { t: "const", name: tag };
    case "apply":
      return readApply(node, depth);
    case "piecewise": {
      const pieces: { value: MathAst; cond: MathAst }[] = [];
      let otherwise: MathAst | undefined;
      for (const k of elements(node)) {
        const kk = elements(k);
        if (tagOf(k) === "piece" && kk.length === 2) pieces.push({ value: readNode(kk[0], depth + 1), cond: readNode(kk[1], depth + 1) });
        else if (tagOf(k) === "otherwise" && kk.length === 1) otherwise = readNode(kk[0], depth + 1);
        else throw new MathError(`malformed <${tagOf(k)}> in <piecewise>`);
      }
      return { t: "piecewise", pieces, otherwise };
    }
    case "lambda": {
      const params: string[] = [];
      const kids = elements(node);
      let body: MathAst | undefined;
      for (const k of kids) {
        if (tagOf(k) === "bvar") {
          const ci = elements(k)[0];
          if (!ci || tagOf(ci) !== "ci") throw new MathError("<bvar> must hold a <ci>");
          params.push(textOf(ci));
        } else if (body === undefined) body = readNode(k, depth + 1);
        else throw new MathError("<lambda> has more than one body");
      }
      if (!body) throw new MathError("<lambda> has no body");
      return { t: "lambda", params, body };
    }
    case "semantics": {
      const kids = elements(node).filter((k) => tagOf(k) !== "annotation" && tagOf(k) !== "annotation-xml");
      if (kids.length !== 1) throw new MathError("<semantics> must hold one expression");
      return readNode(kids[0], depth + 1);
    }
    default:
      throw new MathError(`MathML element <${tag}> is not supported`);
  }
}

function readApply(node: XmlNode, depth: number): MathAst {
  const kids = elements(node);
  if (kids.length === 0) throw new MathError("empty <apply>");
  const head = kids[0];
  const op = tagOf(head);
  let degree: MathAst | undefined;
  let logbase: MathAst | undefined;
  const args: MathAst[] = [];
  for (const k of kids.slice(1)) {
    const tag = tagOf(k);
    if (tag === "degree" || tag === "logbase") {
      const inner = elements(k);
      if (inner.length !== 1) throw new MathError(`<${tag}> must hold one expression`);
      if (tag === "degree") degree = readNode(inner[0], depth + 1);
      else logbase = readNode(inner[0], depth + 1);
    } else args.push(readNode(k, depth + 1));
  }
  if (op === "ci") return { t: "call", fn: textOf(head), args };
  if (op === "csymbol") {
    const url = attrsOf(head).definitionURL ?? "";
    return { t: "call", fn: `csymbol:${url.slice(url.lastIndexOf("/") + 1)}`, args };
  }
  if (!OPERATORS.has(op)) throw new MathError(`MathML operator <${op}> is not supported`);
  return { t: "apply", op, args, degree, logbase };
}

/** Where a formula's symbols go: each `ci` becomes a formula, or an error. */
export type SymbolMap = (id: string) => Formula;

/**
 * Our formula tree, the target of translation: exactly what the `expression` law accepts
 * (numbers, symbols, the time t, + − * / ^, exp log sqrt min max, piecewise; and as its conditions
 * true/false, relations, and/or/xor/not). Printed by printFormula.
 */
export type Formula =
  | { k: "num"; v: number }
  | { k: "sym"; id: string }
  | { k: "time" }
  | { k: "neg"; a: Formula }
  | { k: "bin"; op: "+" | "-" | "*" | "/" | "^"; a: Formula; b: Formula }
  | { k: "fn"; fn: "exp" | "log" | "sqrt" | "min" | "max"; args: Formula[] }
  | { k: "pw"; pieces: { v: Formula; c: Formula }[]; o: Formula | null }
  | { k: "bool"; v: boolean }
  | { k: "cmp"; op: "<" | "<=" | ">" | ">=" | "==" | "!="; a: Formula; b: Formula }
  | { k: "logic"; op: "and" | "or" | "xor"; a: Formula; b: Formula }
  | { k: "not"; a: Formula };

/** Whether a formula is a condition (true or false), not a number. */
export const isConditionFormula = (f: Formula): boolean => f.k === "bool" || f.k === "cmp" || f.k === "logic" || f.k === "not";

/** A formula's direct children. */
function formulaChildren(f: Formula): Formula[] {
  switch (f.k) {
    case "neg":
    case "not":
      return [f.a];
    case "bin":
    case "cmp":
    case "logic":
      return [f.a, f.b];
    case "fn":
      return f.args;
    case "pw": {
      const out: Formula[] = [];
      for (const p of f.pieces) out.push(p.v, p.c);
      if (f.o) out.push(f.o);
      return out;
    }
    default:
      return [];
  }
}

export const num = (v: number): Formula => ({ k: "num", v });
export const sym = (id: string): Formula => ({ k: "sym", id });
export const bin = (op: "+" | "-" | "*" | "/" | "^", a: Formula, b: Formula): Formula => ({ k: "bin", op, a, b });

export interface TranslateContext {
  /** Resolves a `ci` (species, parameter, compartment, …). */
  symbol: SymbolMap;
  /** Function definitions by id. */
  functions: ReadonlyMap<string, { params: string[]; body: MathAst }>;
  /** Shared work budget of the import (none: only the per-formula bounds apply). */
  budget?: ExpansionBudget;
  /**
   * The file's time over ours (our time unit over the file's, in seconds): the time csymbol
   * becomes t · timeFactor. Absent: the time symbol is refused (where no time is in force).
   */
  timeFactor?: number;
}

/**
 * Size (nodes) and depth of formulas as printed, i.e. with shared subtrees counted at every use.
 * Translation shares the formula of a function argument among all its uses, so a small tree of
 * objects can stand for an enormous printed formula; this measures the latter in O(1) per new node.
 */
const measured = new WeakMap<Formula, { size: number; depth: number }>();

export function measureFormula(f: Formula): { size: number; depth: number } {
  const known = measured.get(f);
  if (known) return known;
  let size = 1;
  let depth = 0;
  const add = (c: Formula) => {
    const m = measureFormula(c);
    size += m.size;
    depth = Math.max(depth, m.depth);
  };
  for (const c of formulaChildren(f)) add(c);
  const m = { size, depth: depth + 1 };
  measured.set(f, m);
  return m;
}

/** @throws ExpansionError when a formula is larger or deeper than EXPANSION_LIMITS. */
function checkSize(f: Formula): Formula {
  const m = measureFormula(f);
  if (m.size > EXPANSION_LIMITS.maxNodes) throw new ExpansionError(`expands to more than ${EXPANSION_LIMITS.maxNodes} nodes`, "size");
  if (m.depth > EXPANSION_LIMITS.maxDepth) throw new ExpansionError(`expands to a formula nested more than ${EXPANSION_LIMITS.maxDepth} deep`, "size");
  return f;
}

/** Counts one step against the import's budget. @throws ExpansionError once it is spent. */
function spendStep(budget: ExpansionBudget | undefined): void {
  if (!budget) return;
  budget.steps += 1;
  if (budget.steps > EXPANSION_LIMITS.maxSteps) {
    throw new ExpansionError(`the model's formulas expand to more than ${EXPANSION_LIMITS.maxSteps} nodes in all`, "budget");
  }
  // The clock is read every 1024 steps: cheap, and a step is well under a microsecond.
  if ((budget.steps & 1023) === 0 && budget.overTime?.()) {
    throw new ExpansionError(`the import took longer than ${budget.timeBudget ?? "its time budget"}`, "budget");
  }
}

/**
 * Size and depth a function definition's body expands to with every argument a single node: a
 * lower bound of any use, so a definition past EXPANSION_LIMITS can be refused by name before use.
 * @throws MathError for a definition that calls itself, directly or through others.
 */
export function measureDefinitions(functions: ReadonlyMap<string, { params: string[]; body: MathAst }>): Map<string, { size: number; depth: number }> {
  const out = new Map<string, { size: number; depth: number }>();
  const active: string[] = [];
  const ofDefinition = (id: string): { size: number; depth: number } => {
    const known = out.get(id);
    if (known) return known;
    if (active.includes(id)) {
      const cycle = [...active.slice(active.indexOf(id)), id].map((x) => `"${x}"`).join(" → ");
      throw new MathError(`function definitions call themselves (${cycle}); recursion is not allowed`);
    }
    active.push(id);
    const m = ofAst((functions.get(id) as { body: MathAst }).body);
    active.pop();
    out.set(id, m);
    return m;
  };
  const ofAst = (a: MathAst): { size: number; depth: number } => {
    const parts: MathAst[] = [];
    let self = { size: 1, depth: 0 };
    if (a.t === "apply") {
      parts.push(...a.args);
      if (a.degree) parts.push(a.degree);
      if (a.logbase) parts.push(a.logbase);
    } else if (a.t === "call") {
      parts.push(...a.args);
      if (functions.has(a.fn)) self = ofDefinition(a.fn);
    } else if (a.t === "piecewise") {
      for (const p of a.pieces) parts.push(p.value, p.cond);
      if (a.otherwise) parts.push(a.otherwise);
    } else if (a.t === "lambda") parts.push(a.body);
    let size = self.size;
    let depth = self.depth;
    for (const p of parts) {
      const m = ofAst(p);
      size += m.size;
      depth = Math.max(depth, m.depth);
    }
    return { size, depth: depth + 1 };
  };
  for (const id of functions.keys()) ofDefinition(id);
  return out;
}

/**
 * Translates MathML into our formula language. abs(x) becomes max(x, −x); log with base b
 * becomes log(x)/log(b); root of degree d becomes x^(1/d) (sqrt for d = 2); pi and e become
 * numbers; function definitions are expanded in place. Relations with more than two arguments
 * (`<lt/> a b c`: a < b < c) become a conjunction of neighbouring pairs; `and`, `or`, `xor` with
 * many arguments fold from the left (none: true for and, false for or and xor; MathML 2 §4.4.3).
 * The time csymbol becomes t (times ctx.timeFactor). Conditions and numbers are kept apart, and
 * the whole formula (depth 0) must be a number.
 * @throws MathError for what the `expression` law cannot say.
 */
export function translate(ast: MathAst, ctx: TranslateContext, depth = 0): Formula {
  if (depth > 500) throw new MathError("formula nested too deeply (recursive function definitions?)");
  spendStep(ctx.budget);
  const f = checkSize(translateNode(ast, ctx, depth));
  if (depth === 0 && isConditionFormula(f)) throw new MathError(`a condition (${printFormula(f).slice(0, 60)}) cannot be a number here; use <piecewise>`);
  return f;
}

/** A translated argument where a number belongs. */
function asNumber(f: Formula, where: string): Formula {
  if (isConditionFormula(f)) throw new MathError(`${where} needs a number, found the condition ${printFormula(f).slice(0, 60)}`);
  return f;
}

/** A translated argument where a condition belongs. */
function asCondition(f: Formula, where: string): Formula {
  if (!isConditionFormula(f)) throw new MathError(`${where} needs a condition (a relation, and, or, xor, not, true, false), found ${printFormula(f).slice(0, 60)}`);
  return f;
}

function translateNode(ast: MathAst, ctx: TranslateContext, depth: number): Formula {
  const go = (a: MathAst) => translate(a, ctx, depth + 1);
  switch (ast.t) {
    case "num":
      return num(ast.v);
    case "ci":
      return ctx.symbol(ast.id);
    case "const":
      if (ast.name === "pi") return num(Math.PI);
      if (ast.name === "exponentiale") return num(Math.E);
      if (ast.name === "true" || ast.name === "false") return { k: "bool", v: ast.name === "true" };
      throw new MathError(`<${ast.name}/> is not supported in a rate formula`);
    case "csymbol":
      if (ast.name === "avogadro") return num(6.02214076e23); // SI 2019 value of N_A
      if (ast.name === "time") {
        if (ctx.timeFactor === undefined) throw new MathError("the time symbol is not supported here");
        return ctx.timeFactor === 1 ? { k: "time" } : bin("*", { k: "time" }, num(ctx.timeFactor));
      }
      throw new MathError(`csymbol "${ast.name}" is not supported`);
    case "piecewise": {
      if (ast.pieces.length === 0) throw new MathError("<piecewise> needs at least one <piece>");
      if (ast.pieces.length > 64) throw new MathError(`<piecewise> has more than 64 pieces`);
      const pieces = ast.pieces.map((p, k) => ({ v: asNumber(go(p.value), `<piece> ${k + 1}'s value`), c: asCondition(go(p.cond), `<piece> ${k + 1}'s condition`) }));
      return { k: "pw", pieces, o: ast.otherwise ? asNumber(go(ast.otherwise), "<otherwise>") : null };
    }
    case "lambda":
      throw new MathError("<lambda> outside a function definition");
    case "call": {
      if (ast.fn.startsWith("csymbol:")) throw new MathError(`${ast.fn.slice(8)}() is not supported`);
      const def = ctx.functions.get(ast.fn);
      if (!def) throw new MathError(`unknown function "${ast.fn}"`);
      if (def.params.length !== ast.args.length) {
        throw new MathError(`function "${ast.fn}" takes ${def.params.length} arguments, got ${ast.args.length}`);
      }
      const bound = new Map<string, Formula>();
      def.params.forEach((p, i) => bound.set(p, go(ast.args[i])));
      // Inside a function body only its own arguments are visible (SBML lambda semantics).
      const inner: TranslateContext = {
        functions: ctx.functions,
        budget: ctx.budget,
        timeFactor: ctx.timeFactor,
        symbol: (id) => {
          const v = bound.get(id);
          if (!v) throw new MathError(`function "${ast.fn}" uses "${id}", which is not one of its arguments`);
          return v;
        },
      };
      try {
        return translate(def.body, inner, depth + 1);
      } catch (e) {
        // Name the innermost definition whose expansion grew too large.
        if (e instanceof ExpansionError && e.kind === "size" && e.fn === undefined) {
          e.fn = ast.fn;
          e.message = `function "${ast.fn}" ${e.message}`;
        }
        throw e;
      }
    }
    case "apply":
      return translateApply(ast, go);
  }
}

const RELATION_OPS = { eq: "==", neq: "!=", gt: ">", lt: "<", geq: ">=", leq: "<=" } as const;

function translateApply(ast: Extract<MathAst, { t: "apply" }>, go: (a: MathAst) => Formula): Formula {
  const raw = ast.args.map(go);
  const need = (lo: number, hi = lo) => {
    if (raw.length < lo || raw.length > hi) throw new MathError(`<${ast.op}> takes ${lo === hi ? lo : `${lo} or more`} argument${hi === 1 ? "" : "s"}, got ${raw.length}`);
  };
  if (ast.op === "and" || ast.op === "or" || ast.op === "xor") {
    const conds = raw.map((a) => asCondition(a, `<${ast.op}>`));
    if (conds.length === 0) return { k: "bool", v: ast.op === "and" };
    const op = ast.op;
    return conds.reduce((a, b) => ({ k: "logic", op, a, b }));
  }
  if (ast.op === "not") {
    need(1);
    return { k: "not", a: asCondition(raw[0], "<not>") };
  }
  const rel = (RELATION_OPS as Record<string, "==" | "!=" | ">" | "<" | ">=" | "<=">)[ast.op];
  if (rel) {
    const xs = raw.map((a) => asNumber(a, `<${ast.op}>`));
    if (ast.op === "neq") need(2);
    else if (xs.length < 2) throw new MathError(`<${ast.op}> takes 2 or more arguments, got ${xs.length}`);
    let f: Formula = { k: "cmp", op: rel, a: xs[0], b: xs[1] };
    for (let i = 2; i < xs.length; i++) f = { k: "logic", op: "and", a: f, b: { k: "cmp", op: rel, a: xs[i - 1], b: xs[i] } };
    return f;
  }
  const args = raw.map((a) => asNumber(a, `<${ast.op}>`));
  switch (ast.op) {
    case "plus":
      if (args.length === 0) return num(0);
      return args.reduce((a, b) => bin("+", a, b));
    case "times":
      if (args.length === 0) return num(1);
      return args.reduce((a, b) => bin("*", a, b));
    case "minus":
      need(1, 2);
      return args.length === 1 ? { k: "neg", a: args[0] } : bin("-", args[0], args[1]);
    case "divide":
      need(2);
      return bin("/", args[0], args[1]);
    case "power":
      need(2);
      return bin("^", args[0], args[1]);
    case "exp":
      need(1);
      return { k: "fn", fn: "exp", args };
    case "ln":
      need(1);
      return { k: "fn", fn: "log", args };
    case "log": {
      need(1);
      const base = ast.logbase ? go(ast.logbase) : num(10);
      return bin("/", { k: "fn", fn: "log", args }, { k: "fn", fn: "log", args: [base] });
    }
    case "root": {
      need(1);
      const d = ast.degree ? go(ast.degree) : num(2);
      if (d.k === "num" && d.v === 2) return { k: "fn", fn: "sqrt", args };
      return bin("^", args[0], bin("/", num(1), d));
    }
    case "abs":
      need(1);
      return { k: "fn", fn: "max", args: [args[0], { k: "neg", a: args[0] }] };
    case "min":
    case "max":
      if (args.length < 1) throw new MathError(`<${ast.op}> needs at least one argument`);
      return { k: "fn", fn: ast.op, args };
    default:
      throw new MathError(`MathML operator <${ast.op}> is not supported in a rate formula`);
  }
}

/** Ids a MathML tree refers to through `ci` (not function names, not lambda arguments). */
export function mathSymbols(ast: MathAst, out = new Set<string>()): Set<string> {
  switch (ast.t) {
    case "ci":
      out.add(ast.id);
      break;
    case "apply":
      ast.args.forEach((a) => mathSymbols(a, out));
      if (ast.degree) mathSymbols(ast.degree, out);
      if (ast.logbase) mathSymbols(ast.logbase, out);
      break;
    case "call":
      ast.args.forEach((a) => mathSymbols(a, out));
      break;
    case "piecewise":
      ast.pieces.forEach((p) => (mathSymbols(p.value, out), mathSymbols(p.cond, out)));
      if (ast.otherwise) mathSymbols(ast.otherwise, out);
      break;
    default:
      break;
  }
  return out;
}

/** Evaluates a formula numerically, symbols through `value` (used for initial values). */
export function evaluateFormula(f: Formula, value: (id: string) => number): number {
  switch (f.k) {
    case "num":
      return f.v;
    case "sym":
      return value(f.id);
    case "time":
      return 0; // initial values are at t = 0
    case "pw": {
      for (const p of f.pieces) if (evaluateCondition(p.c, value)) return evaluateFormula(p.v, value);
      return f.o ? evaluateFormula(f.o, value) : NaN;
    }
    case "neg":
      return -evaluateFormula(f.a, value);
    case "bin": {
      const a = evaluateFormula(f.a, value);
      const b = evaluateFormula(f.b, value);
      switch (f.op) {
        case "+":
          return a + b;
        case "-":
          return a - b;
        case "*":
          return a * b;
        case "/":
          return a / b;
        case "^":
          return Math.pow(a, b);
      }
      break;
    }
    case "fn": {
      const xs = f.args.map((x) => evaluateFormula(x, value));
      switch (f.fn) {
        case "exp":
          return Math.exp(xs[0]);
        case "log":
          return Math.log(xs[0]);
        case "sqrt":
          return Math.sqrt(xs[0]);
        case "min":
          return Math.min(...xs);
        case "max":
          return Math.max(...xs);
      }
    }
  }
  throw new TypeError("evaluateFormula: bad node");
}

/** The truth of a condition formula, symbols through `value`. */
export function evaluateCondition(f: Formula, value: (id: string) => number): boolean {
  switch (f.k) {
    case "bool":
      return f.v;
    case "not":
      return !evaluateCondition(f.a, value);
    case "logic": {
      const a = evaluateCondition(f.a, value);
      const b = evaluateCondition(f.b, value);
      return f.op === "and" ? a && b : f.op === "or" ? a || b : a !== b;
    }
    case "cmp": {
      const a = evaluateFormula(f.a, value);
      const b = evaluateFormula(f.b, value);
      switch (f.op) {
        case "<":
          return a < b;
        case "<=":
          return a <= b;
        case ">":
          return a > b;
        case ">=":
          return a >= b;
        case "==":
          return a === b;
        case "!=":
          return a !== b;
      }
    }
  }
  throw new TypeError("evaluateCondition: bad node");
}

/** Replaces symbols by formulas (ids not in the map stay). */
export function substitute(f: Formula, map: (id: string) => Formula | undefined): Formula {
  switch (f.k) {
    case "num":
      return f;
    case "sym":
      return map(f.id) ?? f;
    case "neg":
      return { k: "neg", a: substitute(f.a, map) };
    case "bin":
      return { k: "bin", op: f.op, a: substitute(f.a, map), b: substitute(f.b, map) };
    case "fn":
      return { k: "fn", fn: f.fn, args: f.args.map((a) => substitute(a, map)) };
    case "time":
    case "bool":
      return f;
    case "pw":
      return { k: "pw", pieces: f.pieces.map((p) => ({ v: substitute(p.v, map), c: substitute(p.c, map) })), o: f.o ? substitute(f.o, map) : null };
    case "cmp":
      return { k: "cmp", op: f.op, a: substitute(f.a, map), b: substitute(f.b, map) };
    case "logic":
      return { k: "logic", op: f.op, a: substitute(f.a, map), b: substitute(f.b, map) };
    case "not":
      return { k: "not", a: substitute(f.a, map) };
  }
}

// mathjs's order, loosest first: or, xor, and, relations, + −, * /, unary − and not, ^.
const PRECEDENCE = { or: 0.2, xor: 0.3, and: 0.4, cmp: 0.6, "+": 1, "-": 1, "*": 2, "/": 2, neg: 3, "^": 4 } as const;

/**
 * Prints a formula in the syntax of the `expression` law (mathjs): minimal parentheses, numbers
 * in JavaScript's shortest round-trip form, negative literals parenthesised.
 */
export function printFormula(f: Formula): string {
  return print(f, 0);
}

function print(f: Formula, parentPrec: number): string {
  switch (f.k) {
    case "num": {
      const s = String(f.v);
      return f.v < 0 || Object.is(f.v, -0) ? `(${s})` : s;
    }
    case "sym":
      return f.id;
    case "neg": {
      const s = `-${print(f.a, PRECEDENCE.neg)}`;
      return parentPrec >= PRECEDENCE.neg ? `(${s})` : s;
    }
    case "bin": {
      const p = PRECEDENCE[f.op];
      // Left-associative + − * /: the right operand needs parentheses at equal precedence;
      // ^ is right-associative in mathjs, so its left operand does.
      const left = print(f.a, f.op === "^" ? p : p - 0.5);
      const right = print(f.b, f.op === "^" ? p - 0.5 : p);
      const s = f.op === "^" ? `${left}^${right}` : `${left} ${f.op} ${right}`;
      return p <= parentPrec ? `(${s})` : s;
    }
    case "fn":
      return `${f.fn}(${f.args.map((a) => print(a, 0)).join(", ")})`;
    case "time":
      return TIME_SYMBOL;
    case "bool":
      return f.v ? "true" : "false";
    case "pw": {
      const args: string[] = [];
      for (const p of f.pieces) args.push(print(p.v, 0), print(p.c, 0));
      if (f.o) args.push(print(f.o, 0));
      return `piecewise(${args.join(", ")})`;
    }
    case "cmp": {
      // Relations do not chain in our language: both sides at the relation's own level.
      const p = PRECEDENCE.cmp;
      const s = `${print(f.a, p)} ${f.op} ${print(f.b, p)}`;
      return p <= parentPrec ? `(${s})` : s;
    }
    case "logic": {
      const p = PRECEDENCE[f.op];
      const s = `${print(f.a, p - 0.05)} ${f.op} ${print(f.b, p)}`;
      return p <= parentPrec ? `(${s})` : s;
    }
    case "not":
      // mathjs binds "not" tighter than a relation: its argument is always bracketed.
      return `not (${print(f.a, 0)})`;
  }
}

const MATHML_NS = "http://www.w3.org/1998/Math/MathML";

/** The definitionURL of SBML's time csymbol (SBML L3V2 core §3.4.7). */
export const TIME_CSYMBOL = "http://www.sbml.org/sbml/symbols/time";

/**
 * Formats a number as a MathML <cn> element (e-notation when JavaScript prints an exponent),
 * with an SBML Level 3 `sbml:units` attribute when the unit is known.
 */
export function cn(v: number, units?: string): string {
  if (!Number.isFinite(v)) throw new RangeError(`cannot write ${v} as MathML`);
  const s = String(v);
  const e = s.indexOf("e");
  const u = units ? ` sbml:units="${units}"` : "";
  if (e < 0) return Number.isInteger(v) ? `<cn type="integer"${u}> ${s} </cn>` : `<cn${u}> ${s} </cn>`;
  return `<cn type="e-notation"${u}> ${s.slice(0, e)} <sep/> ${s.slice(e + 1)} </cn>`;
}

export const ci = (id: string): string => `<ci> ${id} </ci>`;
export const apply = (op: string, ...args: string[]): string => `<apply><${op}/>${args.join("")}</apply>`;

const SBML_L3V2_NS = "http://www.sbml.org/sbml/level3/version2/core";

/** Wraps content MathML in a <math> element (MathML namespace; `sbml:` prefix for cn units). */
export function mathElement(content: string): string {
  return `<math xmlns="${MATHML_NS}" xmlns:sbml="${SBML_L3V2_NS}">${content}</math>`;
}

/** A parsed `expression` (ssa/expr.ts) as content MathML. */
export function exprToMathML(e: Expr): string {
  switch (e.kind) {
    case "num":
      return e.value < 0 ? apply("minus", cn(-e.value)) : cn(e.value);
    case "species":
    case "param":
      return ci(e.id);
    case "neg":
      return apply("minus", exprToMathML(e.arg));
    case "bin": {
      const op = { "+": "plus", "-": "minus", "*": "times", "/": "divide", "^": "power" }[e.op];
      return apply(op, exprToMathML(e.left), exprToMathML(e.right));
    }
    case "call": {
      const args = e.args.map(exprToMathML);
      switch (e.fn) {
        case "exp":
          return apply("exp", ...args);
        case "log":
          return apply("ln", ...args);
        case "sqrt":
          return apply("root", ...args);
        case "pow":
          return apply("power", ...args);
        case "min":
        case "max":
          return apply(e.fn, ...args);
      }
      break;
    }
    case "time":
      return `<csymbol encoding="text" definitionURL="${TIME_CSYMBOL}"> t </csymbol>`;
    case "bool":
      return e.value ? "<true/>" : "<false/>";
    case "cmp": {
      const op = { "<": "lt", "<=": "leq", ">": "gt", ">=": "geq", "==": "eq", "!=": "neq" }[e.op];
      return apply(op, exprToMathML(e.left), exprToMathML(e.right));
    }
    case "logic":
      return apply(e.op, exprToMathML(e.left), exprToMathML(e.right));
    case "not":
      return apply("not", exprToMathML(e.arg));
    case "piecewise": {
      const pieces = e.pieces.map((p) => `<piece>${exprToMathML(p.value)}${exprToMathML(p.cond)}</piece>`).join("");
      return `<piecewise>${pieces}${e.otherwise ? `<otherwise>${exprToMathML(e.otherwise)}</otherwise>` : ""}</piecewise>`;
    }
  }
  throw new TypeError("exprToMathML: bad node");
}
