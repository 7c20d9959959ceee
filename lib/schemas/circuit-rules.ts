/**
 * The rules of the circuit file `burstwise.circuit/1` (CONTRACT.md §1) and the simulation options,
 * as zod schemas, with the formula parser handed in. lib/schemas/circuit.ts binds the parser
 * (mathjs) and is what the app, the API and the worker use; the command line uses these rules
 * directly and loads the parser only for a circuit that has formulas (it costs about a second).
 * Every rejection names the field: `reactions[3].rate.K: unknown parameter "Kc"`.
 */
import { z } from "zod";

import { describeIssue as describeAnyIssue, formatPath } from "@/lib/schemas/common";
import { parseCondition } from "@/ssa/condition";
import type { ExprScope, ParseResult } from "@/ssa/expr";
import { CIRCUIT_FORMAT_2, CIRCUIT_FORMATS, isReservedId, reservedIdReason, type Circuit } from "@/ssa/types";

/** Parses and checks one rate formula (ssa/expr.ts parseExpression). */
export type FormulaChecker = (text: string, scope: ExprScope) => ParseResult;

/** Whether a (decoded, not yet validated) document has any `expression` rate law. */
export function hasFormulas(json: unknown): boolean {
  const reactions = (json as { reactions?: unknown } | null)?.reactions;
  return Array.isArray(reactions) && reactions.some((r) => (r as { rate?: { law?: unknown } } | null)?.rate?.law === "expression");
}

/** A circuit file that breaks a rule; `issues` lists every problem as `<field>: <reason>`. */
export class CircuitError extends Error {
  readonly issues: string[];
  constructor(issues: string[]) {
    super(issues[0] ?? "invalid circuit");
    this.name = "CircuitError";
    this.issues = issues;
  }
}

type PathKey = PropertyKey;

/** Formats a path the CONTRACT.md way: `reactions[3].rate.K`. */
export { formatPath };

/** One zod issue of a circuit file as `<field>: <reason>` (the field is `(root)` for the whole document). */
export const describeIssue = (i: { path: readonly PathKey[]; message: string }): string => describeAnyIssue(i, "(root)");

const IDENTIFIER = /^[A-Za-z_][A-Za-z0-9_]*$/;
const MAX_SPECIES = 2000;
const MAX_REACTIONS = 20000;
/** Most changes in a schedule (each one is a hard stop of every cell and a compiled set of rates). */
export const MAX_SCHEDULE = 200;

const required = (what: string) => (iss: { input?: unknown }) =>
  iss.input === undefined ? "is required" : `must be ${what}`;

const finiteNumber = () => z.number({ error: required("a finite number") });
const identifier = (what: string) =>
  z
    .string({ error: required(`a ${what} id (a string)`) })
    .regex(IDENTIFIER, `must be a valid identifier (letters, digits and _, not starting with a digit)`)
    .max(128, "must be at most 128 characters")
    .refine((id) => !isReservedId(id), { error: (iss) => reservedIdReason(String(iss.input)) });

const NumberOrParam = z.union([finiteNumber(), z.string().min(1, "must be a number or a parameter name")], {
  error: required("a number or a parameter name"),
});

const Stoichiometry = z.record(
  z.string(),
  z.number({ error: "must be a positive integer" }).int("must be a positive integer").positive("must be a positive integer").max(1000, "must be at most 1000"),
  { error: required("an object of species ids to positive integers") },
);

const MassAction = z.strictObject({ law: z.literal("mass_action"), k: NumberOrParam });
const Hill = z.strictObject({
  law: z.enum(["hill_activation", "hill_repression"]),
  input: z.string({ error: required("a species id") }),
  vmax: NumberOrParam,
  K: NumberOrParam,
  n: NumberOrParam,
  basal: NumberOrParam.optional(),
});
const Expression = z.strictObject({
  law: z.literal("expression"),
  expression: z.string({ error: required("a formula (a string)") }),
});

const RateLaw = z.discriminatedUnion("law", [MassAction, Hill, Expression], {
  error: (iss) =>
    iss.input === undefined
      ? "is required"
      : `must be one of "mass_action", "hill_activation", "hill_repression", "expression"`,
});

const Species = z.strictObject({
  id: identifier("species"),
  name: z.string().max(200).optional(),
  initial: finiteNumber().nonnegative("must be >= 0"),
  notes: z.string().max(10000).optional(),
});

const Reaction = z.strictObject({
  id: identifier("reaction"),
  name: z.string().max(200).optional(),
  reactants: Stoichiometry.optional(),
  products: Stoichiometry.optional(),
  rate: RateLaw,
  notes: z.string().max(10000).optional(),
});

/** Display text of one parameter (`parameter_info.<name>`); no number depends on it. */
const ParameterInfo = z.strictObject(
  {
    unit: z.string({ error: "must be text" }).max(40, "must be at most 40 characters").optional(),
    note: z.string({ error: "must be text" }).max(500, "must be at most 500 characters").optional(),
  },
  { error: (iss) => (iss.code === "invalid_type" ? "must be an object { unit?, note? }" : undefined) },
);

/** Longest delay of a triggered change, in the model's time unit (a bound, not a modelling limit). */
export const MAX_TRIGGER_DELAY = 1e9;

/**
 * One change of a schedule: timed, `{ "at": 100, "set": { "IPTG": 1000 } }`, or triggered by the
 * state, `{ "when": "A > 50", "delay": 5, "set": { … } }` (exactly one of `at` and `when`;
 * scheduleIssues says which is missing or extra).
 */
const ScheduledChange = z.strictObject(
  {
    // A number, or a parameter's name (read at the start of the run, overrides in force);
    // scheduleIssues checks the value either way.
    at: NumberOrParam.optional(),
    when: z.string({ error: 'must be a condition such as "A > 50" (a string)' }).optional(),
    delay: NumberOrParam.optional(),
    set: z.record(z.string(), NumberOrParam, { error: required("an object of species or parameter names to numbers or parameter names") }),
  },
  { error: (iss) => (iss.code === "invalid_type" ? "must be an object { at, set } or { when, delay?, set }" : undefined) },
);

export const CircuitShape = z.strictObject({
  format: z.enum(CIRCUIT_FORMATS, { error: `must be ${CIRCUIT_FORMATS.map((f) => `"${f}"`).join(" or ")}` }),
  name: z.string().max(200).optional(),
  description: z.string().max(10000).optional(),
  notes: z.string().max(10000).optional(),
  units: z.strictObject(
    {
      time: z.enum(["s", "min", "h"], { error: required(`"s", "min" or "h"`) }),
      amount: z.enum(["nM", "uM", "molecules"], { error: required(`"nM", "uM" or "molecules"`) }),
    },
    { error: required("an object { time, amount }") },
  ),
  volume_fL: finiteNumber().positive("must be > 0").optional(),
  species: z
    .array(Species, { error: required("a list of species") })
    .min(1, "must list at least one species")
    .max(MAX_SPECIES, `must list at most ${MAX_SPECIES} species`),
  parameters: z.record(z.string(), finiteNumber(), { error: required("an object of names to numbers") }).optional(),
  parameter_info: z.record(z.string(), ParameterInfo, { error: "must be an object of parameter names to { unit?, note? }" }).optional(),
  reactions: z
    .array(Reaction, { error: required("a list of reactions") })
    .min(1, "must list at least one reaction")
    .max(MAX_REACTIONS, `must list at most ${MAX_REACTIONS} reactions`),
  schedule: z
    .array(ScheduledChange, { error: required("a list of changes { at, set } or { when, delay?, set }") })
    .max(MAX_SCHEDULE, `must list at most ${MAX_SCHEDULE} changes`)
    .optional(),
});

export type Issue = { path: PathKey[]; message: string };

/** Lower bounds of the numeric rate-law fields, checked on literal and parameter values alike. */
const FIELD_BOUNDS: Record<string, { min: number; strict: boolean }> = {
  k: { min: 0, strict: false },
  vmax: { min: 0, strict: false },
  K: { min: 0, strict: true },
  n: { min: 0, strict: true },
  basal: { min: 0, strict: false },
};

/**
 * Checks the rules zod cannot express field by field: references, uniqueness, units, formulas.
 * Exported for the SBML importer and the overrides check, which reuse the same rules.
 */
export function circuitSemanticIssuesWith(c: z.infer<typeof CircuitShape>, parseExpression: FormulaChecker): Issue[] {
  const issues: Issue[] = [];
  const add = (path: PathKey[], message: string) => issues.push({ path, message });

  if ((c.units.amount === "nM" || c.units.amount === "uM") && c.volume_fL === undefined) {
    add(["volume_fL"], `is required when units.amount is "${c.units.amount}"`);
  }

  const speciesIds = new Set<string>();
  c.species.forEach((s, i) => {
    if (speciesIds.has(s.id)) add(["species", i, "id"], `duplicate species id "${s.id}"`);
    speciesIds.add(s.id);
  });

  const params = c.parameters ?? {};
  for (const name of Object.keys(params)) {
    if (!IDENTIFIER.test(name)) add(["parameters", name], "must be a valid identifier (letters, digits and _, not starting with a digit)");
    else if (isReservedId(name)) add(["parameters", name], reservedIdReason(name));
    else if (speciesIds.has(name)) add(["parameters", name], `name already used by species "${name}"`);
  }
  const isParameter = (id: string) => Object.prototype.hasOwnProperty.call(params, id) && !speciesIds.has(id);
  for (const name of Object.keys(c.parameter_info ?? {})) {
    if (!Object.prototype.hasOwnProperty.call(params, name)) add(["parameter_info", name], `unknown parameter "${name}"`);
  }

  const reactionIds = new Set<string>();
  c.reactions.forEach((r, i) => {
    if (reactionIds.has(r.id)) add(["reactions", i, "id"], `duplicate reaction id "${r.id}"`);
    reactionIds.add(r.id);
    for (const side of ["reactants", "products"] as const) {
      for (const sp of Object.keys(r[side] ?? {})) {
        if (!speciesIds.has(sp)) add(["reactions", i, side, sp], `unknown species "${sp}"`);
      }
    }
    if (Object.keys(r.reactants ?? {}).length === 0 && Object.keys(r.products ?? {}).length === 0) {
      add(["reactions", i], "has neither reactants nor products");
    }
    const rate = r.rate;
    if (rate.law === "expression") {
      const parsed = parseExpression(rate.expression, { isSpecies: (id) => speciesIds.has(id), isParameter });
      if (!parsed.ok) add(["reactions", i, "rate", "expression"], parsed.reason);
      return;
    }
    if (rate.law !== "mass_action" && !speciesIds.has(rate.input)) {
      add(["reactions", i, "rate", "input"], `unknown species "${rate.input}"`);
    }
    const fields: [string, string | number | undefined][] =
      rate.law === "mass_action"
        ? [["k", rate.k]]
        : [["vmax", rate.vmax], ["K", rate.K], ["n", rate.n], ["basal", rate.basal]];
    for (const [field, v] of fields) {
      if (v === undefined) continue;
      const path = ["reactions", i, "rate", field];
      let value: number;
      if (typeof v === "string") {
        if (!isParameter(v)) {
          add(path, speciesIds.has(v) ? `"${v}" is a species, not a parameter` : `unknown parameter "${v}"`);
          continue;
        }
        value = params[v] as number;
      } else value = v;
      const bound = FIELD_BOUNDS[field];
      if (bound && (bound.strict ? !(value > bound.min) : !(value >= bound.min))) {
        const via = typeof v === "string" ? ` (parameter "${v}" is ${value})` : ` (got ${value})`;
        add(path, `must be ${bound.strict ? ">" : ">="} ${bound.min}${via}`);
      }
    }
  });
  if (c.schedule !== undefined) scheduleIssues(c, speciesIds, isParameter, add);
  return issues;
}

/**
 * The rules of a schedule: format /2; times in order; every name a species or a parameter; and a
 * parameter's new value within the bounds of every rate-law field that reads it.
 */
function scheduleIssues(c: z.infer<typeof CircuitShape>, speciesIds: Set<string>, isParameter: (id: string) => boolean, add: (path: PathKey[], message: string) => void): void {
  const schedule = c.schedule ?? [];
  if (c.format !== CIRCUIT_FORMAT_2 && schedule.length > 0) {
    add(["schedule"], `needs "format": "${CIRCUIT_FORMAT_2}" (a "${c.format}" file has no schedule)`);
    return;
  }
  // The rate-law fields that read each parameter, with their bounds.
  const readers = new Map<string, { path: string; min: number; strict: boolean }[]>();
  c.reactions.forEach((r, i) => {
    const rate = r.rate;
    if (rate.law === "expression") return;
    const fields: [string, string | number | undefined][] = rate.law === "mass_action" ? [["k", rate.k]] : [["vmax", rate.vmax], ["K", rate.K], ["n", rate.n], ["basal", rate.basal]];
    for (const [field, v] of fields) {
      const bound = FIELD_BOUNDS[field];
      if (typeof v !== "string" || !bound) continue;
      readers.set(v, [...(readers.get(v) ?? []), { path: `reactions[${i}].rate.${field}`, ...bound }]);
    }
  });
  const params = c.parameters ?? {};
  // A field's value: the number, or the named parameter's value (null, with an issue, when the
  // name is not a parameter or the value is out of [0, max]).
  const valueOf = (v: number | string, path: PathKey[], max = Infinity): number | null => {
    let value: number;
    if (typeof v === "string") {
      if (!isParameter(v)) {
        add(path, speciesIds.has(v) ? `"${v}" is a species, not a parameter` : `unknown parameter "${v}"`);
        return null;
      }
      value = params[v] as number;
    } else value = v;
    const via = typeof v === "string" ? ` (parameter "${v}" is ${value})` : "";
    if (!(value >= 0)) add(path, `must be >= 0${via}`);
    else if (value > max) add(path, `must be at most ${max}${via}`);
    else return value;
    return null;
  };
  let lastTimed: { k: number; at: number } | null = null;
  schedule.forEach((change, k) => {
    if (change.at !== undefined && change.when !== undefined) add(["schedule", k], 'has both "at" and "when"; a change is either timed or triggered');
    else if (change.at === undefined && change.when === undefined) add(["schedule", k], 'needs "at" (a time) or "when" (a condition on species)');
    if (change.at !== undefined) {
      if (change.delay !== undefined) add(["schedule", k, "delay"], 'applies only to a triggered change ("when"); a timed change happens at "at"');
      const at = valueOf(change.at, ["schedule", k, "at"]);
      if (at !== null) {
        if (lastTimed && at < lastTimed.at) add(["schedule", k, "at"], `must not be earlier than schedule[${lastTimed.k}].at (${lastTimed.at})`);
        lastTimed = { k, at };
      }
    } else if (change.delay !== undefined) valueOf(change.delay, ["schedule", k, "delay"], MAX_TRIGGER_DELAY);
    if (change.when !== undefined) {
      const parsed = parseCondition(change.when, { isSpecies: (id) => speciesIds.has(id), isParameter });
      if (!parsed.ok) add(["schedule", k, "when"], parsed.reason);
    }
    const names = Object.keys(change.set);
    if (names.length === 0) add(["schedule", k, "set"], "must change at least one species or parameter");
    for (const name of names) {
      if (!speciesIds.has(name) && !isParameter(name)) {
        add(["schedule", k, "set", name], `unknown species or parameter "${name}"`);
        continue;
      }
      const value = valueOf(change.set[name], ["schedule", k, "set", name]);
      if (value === null) continue;
      for (const f of readers.get(name) ?? []) {
        if (f.strict ? !(value > f.min) : !(value >= f.min)) add(["schedule", k, "set", name], `must keep ${f.path} ${f.strict ? ">" : ">="} ${f.min} (got ${value})`);
      }
    }
  });
}

/**
 * Reserved names in a decoded document, in document order: keys named `__proto__` anywhere
 * (JSON.parse keeps them as own keys, but zod builds its output by assignment, where such a key
 * silently vanishes: a parameter dropped, a stoichiometry emptied), so they are found on the raw
 * input before zod sees it; and `id` fields holding a reserved name, so that a species named
 * `__proto__` is reported at its id rather than where a reaction uses it.
 */
export function reservedNameIssues(json: unknown, path: PathKey[] = [], out: Issue[] = []): Issue[] {
  if (path.length > 8 || json === null || typeof json !== "object") return out;
  if (Array.isArray(json)) {
    json.forEach((v, i) => reservedNameIssues(v, [...path, i], out));
    return out;
  }
  for (const [key, value] of Object.entries(json)) {
    if (key === "__proto__") out.push({ path: [...path, key], message: reservedIdReason(key) });
    else if (key === "id" && typeof value === "string" && isReservedId(value)) out.push({ path: [...path, key], message: reservedIdReason(value) });
    else reservedNameIssues(value, [...path, key], out);
  }
  return out;
}

/** The zod schema of a circuit file, structure and cross-references, with a given formula parser. */
export function makeCircuitSchema(parseExpression: FormulaChecker) {
  const shape = CircuitShape.superRefine((c, ctx) => {
    for (const i of circuitSemanticIssuesWith(c, parseExpression)) ctx.addIssue({ code: "custom", path: i.path, message: i.message });
  });
  return z.preprocess((json, ctx) => {
    for (const i of reservedNameIssues(json)) ctx.addIssue({ code: "custom", path: i.path, message: i.message });
    return json;
  }, shape);
}

/** A checker for documents without formulas; reaching it means hasFormulas was not consulted. */
export const noFormulas: FormulaChecker = () => ({ ok: false, reason: "formulas need the expression parser (internal)" });

/**
 * Parses and validates a circuit file (already JSON-decoded) with a given formula parser.
 * @throws CircuitError naming the first bad field in `.message` and every problem in `.issues`.
 */
export function parseCircuitWith(json: unknown, parseExpression: FormulaChecker): Circuit {
  const res = makeCircuitSchema(parseExpression).safeParse(json);
  if (!res.success) throw new CircuitError(res.error.issues.map(describeIssue));
  return res.data as Circuit;
}

/**
 * Checks parameter overrides (`--set name=value`) against a valid circuit, re-applying the bounds
 * of every rate-law field that uses an overridden parameter.
 * @throws CircuitError like `overrides.Kc: unknown parameter "Kc"`.
 */
export function checkOverridesWith(c: Circuit, overrides: Record<string, number> | undefined, parseExpression: FormulaChecker): void {
  if (!overrides) return;
  const issues: string[] = [];
  const params = c.parameters ?? {};
  for (const [name, value] of Object.entries(overrides)) {
    if (!Object.prototype.hasOwnProperty.call(params, name)) issues.push(`overrides.${name}: unknown parameter "${name}"`);
    else if (typeof value !== "number" || !Number.isFinite(value)) issues.push(`overrides.${name}: must be a finite number`);
  }
  if (issues.length === 0) {
    const merged = { ...c, parameters: { ...params, ...overrides } };
    for (const i of circuitSemanticIssuesWith(merged as z.infer<typeof CircuitShape>, parseExpression)) {
      issues.push(`${formatPath(i.path)}: ${i.message} after overrides`);
    }
  }
  if (issues.length) throw new CircuitError(issues);
}

