/**
 * Types of the circuit file `burstwise.circuit/1` (CONTRACT.md §1). Pure types, no runtime code
 * apart from the error class the engine throws for bad arguments and the reserved ids.
 * The zod schema that produces these values is lib/schemas/circuit.ts.
 */

export const CIRCUIT_FORMAT = "burstwise.circuit/1" as const;
/** The circuit file with a `schedule` of timed changes (README "Schedules of inputs"); /1 files read unchanged. */
export const CIRCUIT_FORMAT_2 = "burstwise.circuit/2" as const;
export const CIRCUIT_FORMATS = [CIRCUIT_FORMAT, CIRCUIT_FORMAT_2] as const;
export type CircuitFormat = (typeof CIRCUIT_FORMATS)[number];

/**
 * One timed change of a schedule: at time `at` (model time unit), each species named in `set` is
 * set to that amount (model amount unit; molecules are added or removed to reach it, rounded to
 * a count) and each parameter to that value, for the rest of the run. `at`, a trigger's `delay`
 * and each value in `set` may name a parameter instead of a number: it is read once, at the
 * start of the run, with the run's overrides in force, so a sweep can move a step's time or level.
 */
export interface TimedChange {
  at: NumberOrParam;
  set: Record<string, NumberOrParam>;
}

/**
 * A change triggered by the state of the cell: each time `when` (a condition on species, in the
 * model amount unit; ssa/condition.ts) turns from false to true, `set` is applied `delay` later
 * (default 0: at once). The condition counts as false before time 0, so one that holds at the
 * start fires at time 0.
 */
export interface TriggeredChange {
  when: string;
  delay?: NumberOrParam;
  set: Record<string, NumberOrParam>;
}

export type ScheduledChange = TimedChange | TriggeredChange;

export const isTimedChange = (c: ScheduledChange): c is TimedChange => "at" in c && (c as TimedChange).at !== undefined;

export type TimeUnit = "s" | "min" | "h";
export type AmountUnit = "nM" | "uM" | "molecules";

/** A numeric field of a rate law: a literal number or the name of a parameter. */
export type NumberOrParam = number | string;

/** Stoichiometries by species id, positive integers. */
export type Stoichiometry = Record<string, number>;

export interface Species {
  id: string;
  /** Initial amount in `units.amount`. */
  initial: number;
  name?: string;
}

export interface MassActionLaw {
  law: "mass_action";
  /** k in amount^(1−order) per time; the rate is k · Π [X]^ν over reactants. */
  k: NumberOrParam;
}

export interface HillLaw {
  law: "hill_activation" | "hill_repression";
  /** Species id whose amount drives the Hill function. */
  input: string;
  vmax: NumberOrParam;
  K: NumberOrParam;
  n: NumberOrParam;
  basal?: NumberOrParam;
}

export interface ExpressionLaw {
  law: "expression";
  /** Arithmetic over species ids and parameter names, in amount per time. */
  expression: string;
}

export type RateLaw = MassActionLaw | HillLaw | ExpressionLaw;

export interface Reaction {
  id: string;
  reactants?: Stoichiometry;
  products?: Stoichiometry;
  rate: RateLaw;
  name?: string;
}

export interface Circuit {
  format: CircuitFormat;
  name?: string;
  description?: string;
  units: { time: TimeUnit; amount: AmountUnit };
  /** Cell volume in femtolitres; required when `units.amount` is a concentration. */
  volume_fL?: number;
  species: Species[];
  parameters?: Record<string, number>;
  /**
   * Display text for declared parameters, by parameter name: a free-text unit (at most 40
   * characters) and a note (at most 500). Optional; no number depends on it.
   */
  parameter_info?: Record<string, ParameterInfo>;
  reactions: Reaction[];
  /** Timed changes of species and parameters, in time order (format /2 only). */
  schedule?: ScheduledChange[];
}

/** What the modeler wrote about one parameter: its unit as text and a note. */
export interface ParameterInfo {
  unit?: string;
  note?: string;
}

/**
 * Names no species, parameter, reaction or compartment may take: the properties every plain
 * JavaScript object has (Object.prototype's, written out so the list does not depend on the
 * runtime), plus `prototype`. Circuits are handled as objects keyed by these ids (parameters,
 * stoichiometries, results), where `__proto__` would vanish or `constructor` read as a function.
 */
export const RESERVED_IDS: ReadonlySet<string> = new Set([
  "__proto__", "constructor", "prototype", "hasOwnProperty", "isPrototypeOf", "propertyIsEnumerable",
  "toString", "toLocaleString", "valueOf", "__defineGetter__", "__defineSetter__", "__lookupGetter__", "__lookupSetter__",
]);

/** True for an id in RESERVED_IDS. */
export function isReservedId(id: string): boolean {
  return RESERVED_IDS.has(id);
}

/** The reason given for a reserved id, after `<field>: `. */
export const reservedIdReason = (id: string): string => `"${id}" is a reserved name (a property of every JavaScript object); choose another`;

/**
 * Thrown by ssa/ entry points for bad input that passed the schema (e.g. an override of an
 * unknown parameter, or one that makes a Hill exponent non-positive). The message names the
 * field the way CONTRACT.md does: `overrides.Kc: unknown parameter "Kc"`.
 */
export class ModelInputError extends RangeError {
  constructor(message: string) {
    super(message);
    this.name = "ModelInputError";
  }
}

/**
 * Default leap tolerance ε of tau-leaping (ssa/tau.ts). Cao, Gillespie & Petzold 2006 suggest 0.03;
 * we chose 0.05 by measurement (ssa/README.md, "Benchmarks"): on the ring timer at 100 fL it keeps
 * every stationary CV within 1.4% of the direct method's while running 11.6–17× faster, where
 * 0.03 (CV within 0.8%) runs 8.2–11× faster. `--tau-epsilon 0.03` gives the paper's value.
 */
export const TAU_EPSILON = 0.05;

/** Largest ε accepted by tau-leaping (ssa/tau.ts): beyond it a leap may change propensities by more than a fifth. */
export const MAX_TAU_EPSILON = 0.2;
