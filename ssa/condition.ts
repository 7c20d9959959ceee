/**
 * Trigger conditions of a schedule's state-triggered changes (`{ "when": "A > 50", … }`): a
 * comparison of a species or parameter with a number, parameter or species, combined with
 * `and`, `or`, `not` and parentheses. Parsed by hand (a few dozen characters, no formula parser
 * to load in the browser or a worker thread), bounded in length and nesting, and compiled to a
 * closure over the species vector. Species read in the circuit's amount unit, as `set` writes
 * them. Pure: no I/O.
 */

export type Operand = { kind: "num"; value: number } | { kind: "species"; id: string } | { kind: "param"; id: string };

export type Condition =
  | { kind: "cmp"; op: "<" | "<=" | ">" | ">="; left: Operand; right: Operand }
  | { kind: "and" | "or"; left: Condition; right: Condition }
  | { kind: "not"; arg: Condition };

export const CONDITION_LIMITS = { maxChars: 500, maxDepth: 16, maxComparisons: 32 } as const;

export interface ConditionScope {
  isSpecies(id: string): boolean;
  isParameter(id: string): boolean;
}

export type ConditionResult = { ok: true; condition: Condition } | { ok: false; reason: string };

type Token = { t: "num"; v: number } | { t: "id"; v: string } | { t: "op"; v: "<" | "<=" | ">" | ">=" } | { t: "and" | "or" | "not" | "(" | ")" };

class Reject extends Error {}

function tokenize(text: string): Token[] {
  const out: Token[] = [];
  let i = 0;
  while (i < text.length) {
    const c = text[i];
    if (c === " " || c === "\t" || c === "\n" || c === "\r") {
      i++;
      continue;
    }
    const rest = text.slice(i);
    const num = /^(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?/.exec(rest);
    if (num) {
      const v = Number(num[0]);
      if (!Number.isFinite(v)) throw new Reject(`the number ${num[0]} is not finite`);
      out.push({ t: "num", v });
      i += num[0].length;
      continue;
    }
    const id = /^[A-Za-z_][A-Za-z0-9_]*/.exec(rest);
    if (id) {
      const w = id[0];
      out.push(w === "and" || w === "or" || w === "not" ? { t: w } : { t: "id", v: w });
      i += w.length;
      continue;
    }
    const two = rest.slice(0, 2);
    if (two === "<=" || two === ">=") {
      out.push({ t: "op", v: two });
      i += 2;
    } else if (two === "&&" || two === "||") {
      out.push({ t: two === "&&" ? "and" : "or" });
      i += 2;
    } else if (two === "==" || two === "!=") {
      throw new Reject(`"${two}" compares exactly, and a count or an amount rarely equals a threshold; use <, <=, > or >=`);
    } else if (c === "<" || c === ">") {
      out.push({ t: "op", v: c });
      i++;
    } else if (c === "!") {
      out.push({ t: "not" });
      i++;
    } else if (c === "(" || c === ")") {
      out.push({ t: c });
      i++;
    } else if (c === "=") {
      throw new Reject(`"=" is not a comparison; use <, <=, > or >=`);
    } else throw new Reject(`unexpected "${c}" at character ${i + 1}; a condition compares species or parameters with numbers, e.g. "A > 50 and B < 10"`);
  }
  return out;
}

/** Parses and checks a trigger condition; the reason of a failure is a phrase for `<field>: <reason>`. */
export function parseCondition(text: string, scope: ConditionScope): ConditionResult {
  if (typeof text !== "string" || text.trim() === "") return { ok: false, reason: 'must be a condition such as "A > 50"' };
  if (text.length > CONDITION_LIMITS.maxChars) return { ok: false, reason: `condition longer than ${CONDITION_LIMITS.maxChars} characters` };
  try {
    const tokens = tokenize(text);
    let p = 0;
    let comparisons = 0;
    const peek = () => tokens[p];
    const operand = (): Operand => {
      const tk = tokens[p++];
      if (!tk) throw new Reject("ends too early; expected a species, parameter or number");
      if (tk.t === "num") return { kind: "num", value: tk.v };
      if (tk.t === "id") {
        if (scope.isSpecies(tk.v)) return { kind: "species", id: tk.v };
        if (scope.isParameter(tk.v)) return { kind: "param", id: tk.v };
        throw new Reject(`unknown symbol "${tk.v}" (not a species or parameter)`);
      }
      throw new Reject(`expected a species, parameter or number, found "${tk.t}"`);
    };
    const primary = (depth: number): Condition => {
      if (depth > CONDITION_LIMITS.maxDepth) throw new Reject(`condition nested more than ${CONDITION_LIMITS.maxDepth} deep`);
      const tk = peek();
      if (tk?.t === "not") {
        p++;
        return { kind: "not", arg: primary(depth + 1) };
      }
      if (tk?.t === "(") {
        p++;
        const inner = or(depth + 1);
        if (peek()?.t !== ")") throw new Reject('a "(" is not closed');
        p++;
        return inner;
      }
      const left = operand();
      const op = tokens[p++];
      if (!op || op.t !== "op") throw new Reject("a condition compares two things: write e.g. \"A > 50\"");
      const right = operand();
      if (left.kind === "num" && right.kind === "num") throw new Reject("compares two numbers; name a species on one side");
      if (left.kind !== "species" && right.kind !== "species") throw new Reject("reads no species; a trigger watches the state of the cell, so name a species");
      if (++comparisons > CONDITION_LIMITS.maxComparisons) throw new Reject(`more than ${CONDITION_LIMITS.maxComparisons} comparisons`);
      return { kind: "cmp", op: op.v, left, right };
    };
    const and = (depth: number): Condition => {
      let c = primary(depth);
      while (peek()?.t === "and") {
        p++;
        c = { kind: "and", left: c, right: primary(depth) };
      }
      return c;
    };
    const or = (depth: number): Condition => {
      let c = and(depth);
      while (peek()?.t === "or") {
        p++;
        c = { kind: "or", left: c, right: and(depth) };
      }
      return c;
    };
    const condition = or(0);
    if (p < tokens.length) throw new Reject(`unexpected "${describe(tokens[p])}" after a complete condition`);
    return { ok: true, condition };
  } catch (e) {
    if (e instanceof Reject) return { ok: false, reason: e.message };
    throw e;
  }
}

function describe(tk: Token): string {
  return tk.t === "num" || tk.t === "id" || tk.t === "op" ? String(tk.v) : tk.t;
}

/** Species ids a condition reads, in order of first appearance. */
export function conditionSpecies(c: Condition, out: string[] = []): string[] {
  if (c.kind === "cmp") {
    for (const o of [c.left, c.right]) if (o.kind === "species" && !out.includes(o.id)) out.push(o.id);
  } else if (c.kind === "not") conditionSpecies(c.arg, out);
  else {
    conditionSpecies(c.left, out);
    conditionSpecies(c.right, out);
  }
  return out;
}

/** Parameter names a condition reads. */
export function conditionParameters(c: Condition, out: string[] = []): string[] {
  if (c.kind === "cmp") {
    for (const o of [c.left, c.right]) if (o.kind === "param" && !out.includes(o.id)) out.push(o.id);
  } else if (c.kind === "not") conditionParameters(c.arg, out);
  else {
    conditionParameters(c.left, out);
    conditionParameters(c.right, out);
  }
  return out;
}

export type ConditionEvaluator = (y: Float64Array) => boolean;

/**
 * A condition as a closure over a species vector: species read `y[index] * scale` (1/Ω turns
 * counts into the circuit's amounts), parameters take their values from `params`.
 */
export function compileCondition(c: Condition, speciesIndex: ReadonlyMap<string, number>, params: Readonly<Record<string, number>>, scale = 1): ConditionEvaluator {
  const value = (o: Operand): ((y: Float64Array) => number) => {
    if (o.kind === "num") {
      const v = o.value;
      return () => v;
    }
    if (o.kind === "param") {
      const v = params[o.id];
      return () => v;
    }
    const i = speciesIndex.get(o.id) as number;
    return (y) => y[i] * scale;
  };
  switch (c.kind) {
    case "cmp": {
      const l = value(c.left);
      const r = value(c.right);
      switch (c.op) {
        case "<":
          return (y) => l(y) < r(y);
        case "<=":
          return (y) => l(y) <= r(y);
        case ">":
          return (y) => l(y) > r(y);
        case ">=":
          return (y) => l(y) >= r(y);
      }
      break;
    }
    case "and": {
      const l = compileCondition(c.left, speciesIndex, params, scale);
      const r = compileCondition(c.right, speciesIndex, params, scale);
      return (y) => l(y) && r(y);
    }
    case "or": {
      const l = compileCondition(c.left, speciesIndex, params, scale);
      const r = compileCondition(c.right, speciesIndex, params, scale);
      return (y) => l(y) || r(y);
    }
    case "not": {
      const a = compileCondition(c.arg, speciesIndex, params, scale);
      return (y) => !a(y);
    }
  }
  throw new RangeError("compileCondition: unknown node");
}

/** The condition as text again, fully bracketed where `and` and `or` meet. */
export function conditionSource(c: Condition): string {
  const operand = (o: Operand) => (o.kind === "num" ? String(o.value) : o.id);
  switch (c.kind) {
    case "cmp":
      return `${operand(c.left)} ${c.op} ${operand(c.right)}`;
    case "not":
      return `not (${conditionSource(c.arg)})`;
    default:
      return `(${conditionSource(c.left)}) ${c.kind} (${conditionSource(c.right)})`;
  }
}
