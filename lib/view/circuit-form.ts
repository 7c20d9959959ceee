/**
 * The circuit editor's form model: a circuit as the text the modeler types (numbers as strings,
 * stoichiometry as "A + 2 B"), the conversion back to circuit JSON for parseCircuit, and the map
 * from an issue like `reactions[3].rate.K: unknown parameter "Kc"` to the input it concerns.
 * Pure and isomorphic (the editor runs it on every keystroke).
 */
import { circuitSemanticIssues, CircuitSchema, describeIssue, formatPath } from "@/lib/schemas/circuit";
import { CIRCUIT_FORMAT, CIRCUIT_FORMAT_2 } from "@/ssa/types";

export const RATE_LAWS = ["mass_action", "hill_activation", "hill_repression", "expression"] as const;
export type RateLawName = (typeof RATE_LAWS)[number];

export interface SpeciesRow {
  /** Stable React key and field address; never saved. */
  key: string;
  id: string;
  initial: string;
  /** Fields the form does not edit (name, notes), kept as they were. */
  extra: Record<string, unknown>;
}

export interface ParameterRow {
  key: string;
  name: string;
  value: string;
  /** `parameter_info.<name>.unit` and `.note` as typed; empty means absent. */
  unit: string;
  note: string;
}

export interface ReactionRow {
  key: string;
  id: string;
  /** Stoichiometry as text: "A + 2 B"; empty for none. */
  reactants: string;
  products: string;
  law: RateLawName;
  /** Every law's fields stay in the row, so switching laws and back loses nothing. */
  k: string;
  input: string;
  vmax: string;
  K: string;
  n: string;
  basal: string;
  expression: string;
  /** Whether the file spelled an empty side as `{}` (kept so an untouched circuit saves unchanged). */
  emptyReactants: boolean;
  emptyProducts: boolean;
  extra: Record<string, unknown>;
}

/** One change of the schedule: timed (`at`) or triggered (`when`, `delay`), setting "km = 2, P = 0". */
export interface ScheduleRow {
  key: string;
  kind: "at" | "when";
  /** Every kind's fields stay in the row, so switching kinds and back loses nothing. */
  at: string;
  when: string;
  delay: string;
  /** What it sets, as text: "km = 2, P = 0" (a value may be a parameter name). */
  set: string;
  extra: Record<string, unknown>;
}

export interface CircuitForm {
  name: string;
  description: string;
  time: string;
  amount: string;
  volumeFL: string;
  species: SpeciesRow[];
  parameters: ParameterRow[];
  reactions: ReactionRow[];
  /** The schedule of changes (format /2); empty for none. */
  schedule: ScheduleRow[];
  /** Whether the file had `parameters: {}` (kept so an untouched circuit saves unchanged). */
  emptyParameters: boolean;
  /**
   * `parameter_info` entries of names that are not parameters (a half-written raw file), kept so
   * the schema still reports them; written back while no row has that name.
   */
  orphanInfo: Record<string, unknown>;
  /** Top-level fields the form does not edit (notes), kept as they were. */
  extra: Record<string, unknown>;
}

/** A problem found while turning the form into JSON, addressed by a field key (see `fieldKey`). */
export interface FormIssue {
  field: string;
  message: string;
}

let keyCounter = 0;
/**
 * A fresh key for a row added in the editor. Rows read from a file get keys from their index
 * (`circuitToForm`), so a server-rendered form and its hydration agree.
 */
export const newRowKey = (kind: "s" | "p" | "r" | "c"): string => `${kind}n${++keyCounter}`;

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === "object" && v !== null && !Array.isArray(v);
const text = (v: unknown): string => (v === undefined || v === null ? "" : typeof v === "string" ? v : typeof v === "number" ? String(v) : JSON.stringify(v));
const omit = (o: Record<string, unknown>, keys: string[]): Record<string, unknown> =>
  Object.fromEntries(Object.entries(o).filter(([k]) => !keys.includes(k)));

/** Stoichiometry as the editor writes it: `{ A: 1, B: 2 }` → "A + 2 B"; empty → "". */
export function formatStoichiometry(s: unknown): string {
  if (!isRecord(s)) return "";
  return Object.entries(s)
    .map(([id, nu]) => (nu === 1 ? id : `${text(nu)} ${id}`))
    .join(" + ");
}

/**
 * "A + 2 B" (also "2B", "2*B", "∅" or "" for none) → `{ A: 1, B: 2 }`; a species named twice adds up.
 * Returns an error phrase for anything else.
 */
export function parseStoichiometry(input: string): { ok: true; value: Record<string, number> } | { ok: false; reason: string } {
  const t = input.trim();
  if (t === "" || t === "∅" || t === "0") return { ok: true, value: {} };
  const value: Record<string, number> = {};
  for (const term of t.split("+")) {
    const m = /^\s*(?:(\d+)\s*\*?\s*)?([A-Za-z_][A-Za-z0-9_]*)\s*$/.exec(term);
    if (!m) return { ok: false, reason: `cannot read "${term.trim()}": write species as "A + 2 B"` };
    const id = m[2];
    const nu = m[1] === undefined ? 1 : Number(m[1]);
    if (!(nu >= 1)) return { ok: false, reason: `"${term.trim()}": a stoichiometry must be a positive integer` };
    value[id] = (value[id] ?? 0) + nu;
  }
  return { ok: true, value };
}

/** What a change sets as the editor writes it: `{ km: 2, P: "P_high" }` → "km = 2, P = P_high". */
export function formatSetting(set: unknown): string {
  if (!isRecord(set)) return "";
  return Object.entries(set).map(([name, v]) => `${name} = ${text(v)}`).join(", ");
}

/**
 * "km = 2, P = 0" (commas or semicolons between, a value a number or a parameter name) →
 * `{ km: 2, P: 0 }`; returns an error phrase for anything else. Empty → `{}` (the schema says a
 * change must set something).
 */
export function parseSetting(input: string): { ok: true; value: Record<string, number | string> } | { ok: false; reason: string } {
  const value: Record<string, number | string> = {};
  for (const part of input.split(/[,;]/)) {
    const t = part.trim();
    if (t === "") continue;
    const m = /^([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(\S+)$/.exec(t);
    if (!m) return { ok: false, reason: `cannot read "${t}": write what the change sets as "km = 2, P = 0"` };
    if (Object.prototype.hasOwnProperty.call(value, m[1])) return { ok: false, reason: `"${m[1]}" is set twice` };
    const v = numberText(m[2]) as number | string;
    if (typeof v === "string" && !/^[A-Za-z_][A-Za-z0-9_]*$/.test(v)) return { ok: false, reason: `"${t}": the value must be a number or a parameter name` };
    value[m[1]] = v;
  }
  return { ok: true, value };
}

/**
 * A circuit (or any JSON, read leniently: the raw view may hold a half-written file) as form text.
 * Unknown fields of species, reactions and the file are carried in `extra`. Row keys are
 * `<keyPrefix>s0`, `<keyPrefix>p0`, `<keyPrefix>r0`, …
 */
export function circuitToForm(json: unknown, keyPrefix = ""): CircuitForm {
  const c = isRecord(json) ? json : {};
  const units = isRecord(c.units) ? c.units : {};
  const params = isRecord(c.parameters) ? c.parameters : {};
  const info = isRecord(c.parameter_info) ? c.parameter_info : {};
  const infoOf = (name: string) => {
    const entry = Object.prototype.hasOwnProperty.call(info, name) ? info[name] : undefined;
    return isRecord(entry) ? entry : {};
  };
  const species = Array.isArray(c.species) ? c.species : [];
  const reactions = Array.isArray(c.reactions) ? c.reactions : [];
  // A schedule that is not a list (a half-written raw file) stays in `extra` for the schema to name.
  const schedule = Array.isArray(c.schedule) ? c.schedule : [];
  return {
    name: text(c.name),
    description: text(c.description),
    time: text(units.time),
    amount: text(units.amount),
    volumeFL: text(c.volume_fL),
    species: species.map((s, i) => {
      const o = isRecord(s) ? s : {};
      return { key: `${keyPrefix}s${i}`, id: text(o.id), initial: text(o.initial), extra: omit(o, ["id", "initial"]) };
    }),
    parameters: Object.entries(params).map(([name, value], i) => ({
      key: `${keyPrefix}p${i}`, name, value: text(value), unit: text(infoOf(name).unit), note: text(infoOf(name).note),
    })),
    reactions: reactions.map((r, i) => {
      const o = isRecord(r) ? r : {};
      const rate = isRecord(o.rate) ? o.rate : {};
      const law = (RATE_LAWS as readonly string[]).includes(String(rate.law)) ? (rate.law as RateLawName) : "mass_action";
      return {
        key: `${keyPrefix}r${i}`,
        id: text(o.id),
        reactants: formatStoichiometry(o.reactants),
        products: formatStoichiometry(o.products),
        law,
        k: text(rate.k),
        input: text(rate.input),
        vmax: text(rate.vmax),
        K: text(rate.K),
        n: text(rate.n),
        basal: text(rate.basal),
        expression: text(rate.expression),
        emptyReactants: isRecord(o.reactants) && Object.keys(o.reactants).length === 0,
        emptyProducts: isRecord(o.products) && Object.keys(o.products).length === 0,
        extra: omit(o, ["id", "reactants", "products", "rate"]),
      };
    }),
    schedule: schedule.map((ch, i) => {
      const o = isRecord(ch) ? ch : {};
      return {
        key: `${keyPrefix}c${i}`, kind: o.when !== undefined && o.at === undefined ? "when" : "at",
        at: text(o.at), when: text(o.when), delay: text(o.delay), set: formatSetting(o.set),
        extra: omit(o, ["at", "when", "delay", "set"]),
      };
    }),
    emptyParameters: isRecord(c.parameters) && Object.keys(c.parameters).length === 0,
    orphanInfo: Object.fromEntries(Object.entries(info).filter(([name]) => !Object.prototype.hasOwnProperty.call(params, name))),
    extra: omit(c, ["format", "name", "description", "units", "volume_fL", "species", "parameters", "parameter_info", "reactions", ...(Array.isArray(c.schedule) ? ["schedule"] : [])]),
  };
}

/** A number typed in a numeric field: the number when it reads as one, else the text (the schema names the field). */
function numberText(t: string): number | string | undefined {
  const s = t.trim();
  if (s === "") return undefined;
  const v = Number(s);
  return Number.isFinite(v) ? v : s;
}

/** A rate-law field: a number, or else a parameter name. */
const numberOrParam = numberText;

/** Field keys, the address of each input: `species.<rowKey>.initial`, `reactions.<rowKey>.rate.K`, … */
export const fieldKey = {
  species: (row: string, field?: "id" | "initial") => `species.${row}${field ? `.${field}` : ""}`,
  parameter: (row: string, field?: "name" | "value" | "unit" | "note") => `parameters.${row}${field ? `.${field}` : ""}`,
  reaction: (row: string, field?: string) => `reactions.${row}${field ? `.${field}` : ""}`,
  change: (row: string, field?: "kind" | "at" | "when" | "delay" | "set") => `schedule.${row}${field ? `.${field}` : ""}`,
};

/**
 * The form as circuit JSON (not yet validated: run parseCircuit on `json`), plus the problems only
 * the form can see: unreadable stoichiometry and repeated parameter names.
 */
export function formToCircuitJson(form: CircuitForm): { json: Record<string, unknown>; issues: FormIssue[] } {
  const issues: FormIssue[] = [];
  const parameters: Record<string, unknown> = {};
  const info: Record<string, unknown> = {};
  for (const p of form.parameters) {
    const name = p.name.trim();
    if (name === "") {
      issues.push({ field: fieldKey.parameter(p.key, "name"), message: "is required" });
      continue;
    }
    if (Object.prototype.hasOwnProperty.call(parameters, name)) {
      issues.push({ field: fieldKey.parameter(p.key, "name"), message: `duplicate parameter name "${name}"` });
      continue;
    }
    parameters[name] = numberText(p.value);
    const entry = dropUndefined({ unit: p.unit.trim() === "" ? undefined : p.unit, note: p.note.trim() === "" ? undefined : p.note });
    if (Object.keys(entry).length) info[name] = entry;
  }
  for (const [name, entry] of Object.entries(form.orphanInfo)) {
    if (!form.parameters.some((p) => p.name.trim() === name)) info[name] = entry;
  }
  const reactions = form.reactions.map((r) => {
    const side = (which: "reactants" | "products", t: string, keepEmpty: boolean) => {
      const res = parseStoichiometry(t);
      if (!res.ok) {
        issues.push({ field: fieldKey.reaction(r.key, which), message: res.reason });
        return undefined;
      }
      return Object.keys(res.value).length === 0 && !keepEmpty ? undefined : res.value;
    };
    const rate: Record<string, unknown> =
      r.law === "mass_action"
        ? { law: r.law, k: numberOrParam(r.k) }
        : r.law === "expression"
          ? { law: r.law, expression: r.expression }
          : { law: r.law, input: r.input.trim() || undefined, vmax: numberOrParam(r.vmax), K: numberOrParam(r.K), n: numberOrParam(r.n), basal: numberOrParam(r.basal) };
    return dropUndefined({
      ...r.extra,
      id: r.id.trim(),
      reactants: side("reactants", r.reactants, r.emptyReactants),
      products: side("products", r.products, r.emptyProducts),
      rate: dropUndefined(rate),
    });
  });
  const schedule = form.schedule.map((ch) => {
    const res = parseSetting(ch.set);
    if (!res.ok) issues.push({ field: fieldKey.change(ch.key, "set"), message: res.reason });
    const set = res.ok ? res.value : {};
    return ch.kind === "at"
      ? dropUndefined({ ...ch.extra, at: numberOrParam(ch.at) ?? "", set })
      : dropUndefined({ ...ch.extra, when: ch.when, delay: numberOrParam(ch.delay), set });
  });
  const extraSchedule = form.extra.schedule;
  const json = dropUndefined({
    ...form.extra,
    // A schedule needs format /2; a circuit without one stays /1.
    format: schedule.length > 0 || (Array.isArray(extraSchedule) && extraSchedule.length > 0) ? CIRCUIT_FORMAT_2 : CIRCUIT_FORMAT,
    name: form.name.trim() === "" ? undefined : form.name,
    description: form.description === "" ? undefined : form.description,
    units: { time: form.time || undefined, amount: form.amount || undefined },
    volume_fL: numberText(form.volumeFL),
    species: form.species.map((s) => dropUndefined({ ...s.extra, id: s.id.trim(), initial: numberText(s.initial) })),
    parameters: form.parameters.length === 0 && !form.emptyParameters ? undefined : parameters,
    parameter_info: Object.keys(info).length ? info : undefined,
    reactions,
    schedule: schedule.length > 0 ? schedule : extraSchedule,
  });
  return { json, issues };
}

function dropUndefined(o: Record<string, unknown>): Record<string, unknown> {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined));
}

/** `reactions[3].rate.K: unknown parameter "Kc"` → path ["reactions", 3, "rate", "K"] and the reason. */
export function splitIssue(issue: string): { path: (string | number)[]; message: string } {
  if (issue.startsWith("(root): ")) return { path: [], message: issue.slice(8) };
  const path: (string | number)[] = [];
  let i = 0;
  const readName = () => {
    const start = i;
    while (i < issue.length && issue[i] !== "." && issue[i] !== "[" && issue[i] !== ":") i++;
    return issue.slice(start, i);
  };
  const first = readName();
  if (!first) return { path: [], message: issue };
  path.push(first);
  while (i < issue.length) {
    const ch = issue[i];
    if (ch === ":" && issue[i + 1] === " ") return { path, message: issue.slice(i + 2) };
    if (ch === "[") {
      const close = issue.indexOf("]", i);
      const n = Number(issue.slice(i + 1, close));
      if (close < 0 || !Number.isInteger(n)) break;
      path.push(n);
      i = close + 1;
    } else if (ch === ".") {
      i++;
      path.push(readName());
    } else break;
  }
  return { path: [], message: issue };
}

/**
 * The field key of the input an issue concerns, given the form it was found in. Paths with no input
 * of their own land on the nearest row (`reactions.<rowKey>`) or on "circuit" (the whole file).
 */
export function issueField(path: readonly (string | number)[], form: CircuitForm, message = ""): string {
  const [head, second, third, fourth] = path;
  switch (head) {
    case "name":
    case "description":
    case "volume_fL":
      return head;
    case "units":
      return second === "time" || second === "amount" ? `units.${second}` : "units.time";
    case "species": {
      const row = typeof second === "number" ? form.species[second] : undefined;
      if (!row) return "species";
      return third === "id" || third === "initial" ? fieldKey.species(row.key, third) : fieldKey.species(row.key);
    }
    case "parameters": {
      const row = form.parameters.find((p) => p.name.trim() === second);
      if (!row) return "parameters";
      const aboutName = /identifier|already used|duplicate|name/.test(message) && !/finite number/.test(message);
      return fieldKey.parameter(row.key, aboutName ? "name" : "value");
    }
    case "parameter_info": {
      // `parameter_info.<name>.unit` / `.note`; anything else about the entry goes beside its note
      const row = form.parameters.find((p) => p.name.trim() === second);
      if (!row) return "parameters";
      return fieldKey.parameter(row.key, third === "unit" ? "unit" : "note");
    }
    case "reactions": {
      const row = typeof second === "number" ? form.reactions[second] : undefined;
      if (!row) return "reactions";
      if (third === "id" || third === "reactants" || third === "products") return fieldKey.reaction(row.key, third);
      if (third === "rate") {
        const f = typeof fourth === "string" ? fourth : "law";
        return fieldKey.reaction(row.key, `rate.${["k", "input", "vmax", "K", "n", "basal", "expression"].includes(f) ? f : "law"}`);
      }
      return fieldKey.reaction(row.key);
    }
    case "schedule": {
      const row = typeof second === "number" ? form.schedule[second] : undefined;
      if (!row) return "schedule";
      return third === "at" || third === "when" || third === "delay" || third === "set" ? fieldKey.change(row.key, third) : fieldKey.change(row.key);
    }
    default:
      return "circuit";
  }
}

/** One problem of the form, addressed to the input it concerns. */
export interface FieldIssue {
  field: string;
  message: string;
}

/** The form's own problems and the schema's (strings `<path>: <reason>`), each addressed to its input. */
export function listIssues(form: CircuitForm, formIssues: FormIssue[], schemaIssues: string[]): FieldIssue[] {
  const out: FieldIssue[] = formIssues.map((i) => ({ field: i.field, message: i.message }));
  for (const s of schemaIssues) {
    const { path, message } = splitIssue(s);
    out.push({ field: issueField(path, form, message), message });
  }
  return out;
}

const VIA_PARAMETER = /\(parameter "([A-Za-z_][A-Za-z0-9_]*)" is [^)]*\)$/;

/**
 * Every problem of the form by field key, each message once per field. A bound broken through a
 * parameter (`must be >= 0 (parameter "g" is -1)`, reported where the parameter is used) also
 * shows beside that parameter's value, where the fix goes.
 */
export function indexIssues(form: CircuitForm, formIssues: FormIssue[], schemaIssues: string[]): Map<string, string[]> {
  const byField = new Map<string, string[]>();
  const add = (field: string, message: string) => {
    const list = byField.get(field) ?? [];
    if (!list.includes(message)) list.push(message);
    byField.set(field, list);
  };
  for (const i of listIssues(form, formIssues, schemaIssues)) {
    add(i.field, i.message);
    const via = VIA_PARAMETER.exec(i.message);
    const row = via ? form.parameters.find((p) => p.name.trim() === via[1]) : undefined;
    if (row) add(fieldKey.parameter(row.key, "value"), i.message);
  }
  return byField;
}

const FIELD_WORDS: Record<string, string> = {
  id: "id", initial: "initial amount", name: "name", value: "value", unit: "unit", note: "note", reactants: "reactants", products: "products",
  "rate.law": "rate law", "rate.k": "k", "rate.input": "input species", "rate.vmax": "vmax", "rate.K": "K", "rate.n": "n",
  "rate.basal": "basal leak", "rate.expression": "formula", at: "time", when: "condition", delay: "delay", set: "what it sets",
};

/** Where a field key points, in words: "reaction make_B, K", "parameter g, value", "cell volume". */
export function describeField(field: string, form: CircuitForm): string {
  const [section, row, ...rest] = field.split(".");
  const sub = rest.join(".");
  const tail = sub ? `, ${FIELD_WORDS[sub] ?? sub}` : "";
  switch (section) {
    case "name": return "name";
    case "description": return "description";
    case "volume_fL": return "cell volume";
    case "units": return row === "amount" ? "amount unit" : "time unit";
    case "species": {
      const s = form.species.find((x) => x.key === row);
      return s ? `species ${s.id || `row ${form.species.indexOf(s) + 1}`}${tail}` : "species";
    }
    case "parameters": {
      const p = form.parameters.find((x) => x.key === row);
      return p ? `parameter ${p.name || `row ${form.parameters.indexOf(p) + 1}`}${tail}` : "parameters";
    }
    case "reactions": {
      const r = form.reactions.find((x) => x.key === row);
      return r ? `reaction ${r.id || `row ${form.reactions.indexOf(r) + 1}`}${tail}` : "reactions";
    }
    case "schedule": {
      const i = form.schedule.findIndex((x) => x.key === row);
      return i >= 0 ? `schedule change ${i + 1}${tail}` : "schedule";
    }
    default: return "circuit";
  }
}

/**
 * Every problem parseCircuit would report, as `<path>: <reason>` strings, and more: the schema
 * checks references only once the structure is right, so while a field is half-typed the
 * reference rules run here on the raw file too (non-numeric parameter values read as 1), minus
 * anything at a path the structural check already flags.
 */
export function circuitIssues(json: unknown): string[] {
  const res = CircuitSchema.safeParse(json);
  if (res.success) return [];
  const issues = res.error.issues.map(describeIssue);
  if (res.error.issues.every((i) => i.code === "custom")) return issues;
  const flagged = res.error.issues.map((i) => formatPath(i.path));
  const overlaps = (p: string) => flagged.some((f) => related(f, p));
  try {
    const raw = json as Record<string, unknown>;
    const params = isRecord(raw.parameters) ? raw.parameters : {};
    const readable = Object.fromEntries(Object.entries(params).map(([k, v]) => [k, typeof v === "number" && Number.isFinite(v) ? v : 1]));
    const semantic = circuitSemanticIssues({ ...raw, parameters: readable } as Parameters<typeof circuitSemanticIssues>[0]);
    for (const i of semantic) {
      const text = describeIssue(i);
      if (!overlaps(formatPath(i.path)) && !issues.includes(text)) issues.push(text);
    }
  } catch {
    // A shape too broken for the reference rules (no units, a rate that is not an object…):
    // the structural issues already say what to fix first.
  }
  return issues;
}

/** Whether one path is the other or lies inside it (`reactions[1]` and `reactions[1].rate.K`). */
function related(a: string, b: string): boolean {
  const inside = (outer: string, inner: string) =>
    inner === outer || outer === "" || (inner.startsWith(outer) && (inner[outer.length] === "." || inner[outer.length] === "["));
  return inside(a, b) || inside(b, a);
}
