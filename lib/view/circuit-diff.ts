/**
 * A readable difference between two versions of a circuit: what changed in the file's settings,
 * species, parameters (value, unit text and note) and reactions (rate laws field by field). Species and reactions are matched
 * by id and parameters by name, so a rename reads as one removed and one added. Pure.
 */
import type { Circuit, Reaction, Species } from "@/ssa/types";

/** One field that differs; values are display text, null where the field is absent. */
export interface FieldChange {
  field: string;
  from: string | null;
  to: string | null;
}

/** An item present on one side only, with a one-line summary of it. */
export interface ItemSummary {
  id: string;
  summary: string;
}

export interface SectionDiff {
  added: ItemSummary[];
  removed: ItemSummary[];
  changed: { id: string; changes: FieldChange[] }[];
  /** The same ids are listed in another order (the content hash counts order). */
  reordered: boolean;
}

export interface CircuitDiff {
  /** Name, description, notes, units, cell volume. */
  circuit: FieldChange[];
  species: SectionDiff;
  parameters: SectionDiff;
  reactions: SectionDiff;
  isEmpty: boolean;
}

/** Display text of a value: numbers as written, objects as compact JSON, absent as null. */
const show = (v: unknown): string | null =>
  v === undefined || v === null ? null : typeof v === "string" ? v : typeof v === "number" ? String(v) : JSON.stringify(v);

/** `{ A: 1, B: 2 }` → "A + 2 B"; nothing → "∅". */
export function describeSide(s: Record<string, number> | undefined): string {
  const terms = Object.entries(s ?? {}).map(([id, nu]) => (nu === 1 ? id : `${nu} ${id}`));
  return terms.length ? terms.join(" + ") : "∅";
}

/** A rate law in one line: `hill_repression(C; vmax=vA, K=K, n=n)`, `mass_action(k=g)`, `expression(k*A)`. */
export function describeRate(rate: Reaction["rate"]): string {
  if (rate.law === "mass_action") return `mass_action(k=${rate.k})`;
  if (rate.law === "expression") return `expression(${rate.expression})`;
  const basal = rate.basal === undefined ? "" : `, basal=${rate.basal}`;
  return `${rate.law}(${rate.input}; vmax=${rate.vmax}, K=${rate.K}, n=${rate.n}${basal})`;
}

/** A reaction in one line: `make_A: ∅ → A, hill_repression(C; …)`. */
export const describeReaction = (r: Reaction): string =>
  `${describeSide(r.reactants)} → ${describeSide(r.products)}, ${describeRate(r.rate)}`;

function compareFields(pairs: [string, unknown, unknown][]): FieldChange[] {
  const out: FieldChange[] = [];
  for (const [field, a, b] of pairs) {
    const from = show(a);
    const to = show(b);
    if (from !== to) out.push({ field, from, to });
  }
  return out;
}

function sameOrder(a: string[], b: string[]): boolean {
  const common = new Set(a.filter((id) => b.includes(id)));
  const a2 = a.filter((id) => common.has(id));
  const b2 = b.filter((id) => common.has(id));
  return a2.every((id, i) => id === b2[i]);
}

function diffById<T>(
  a: T[], b: T[], idOf: (x: T) => string, summarize: (x: T) => string, fields: (x: T, y: T) => FieldChange[], ordered: boolean,
): SectionDiff {
  const before = new Map(a.map((x) => [idOf(x), x]));
  const after = new Map(b.map((x) => [idOf(x), x]));
  const out: SectionDiff = { added: [], removed: [], changed: [], reordered: false };
  for (const x of b) {
    const id = idOf(x);
    const old = before.get(id);
    if (old === undefined) out.added.push({ id, summary: summarize(x) });
    else {
      const changes = fields(old, x);
      if (changes.length) out.changed.push({ id, changes });
    }
  }
  for (const x of a) if (!after.has(idOf(x))) out.removed.push({ id: idOf(x), summary: summarize(x) });
  out.reordered = ordered && !sameOrder(a.map(idOf), b.map(idOf));
  return out;
}

type Extra = { notes?: string; name?: string };

const speciesFields = (a: Species, b: Species): FieldChange[] => {
  const x = a as Species & Extra;
  const y = b as Species & Extra;
  return compareFields([["initial", x.initial, y.initial], ["name", x.name, y.name], ["notes", x.notes, y.notes]]);
};

const RATE_FIELDS = ["law", "k", "input", "vmax", "K", "n", "basal", "expression"] as const;

const reactionFields = (a: Reaction, b: Reaction): FieldChange[] => {
  const x = a as Reaction & Extra;
  const y = b as Reaction & Extra;
  const rateA = x.rate as unknown as Record<string, unknown>;
  const rateB = y.rate as unknown as Record<string, unknown>;
  return compareFields([
    ["reactants", describeSide(x.reactants), describeSide(y.reactants)],
    ["products", describeSide(x.products), describeSide(y.products)],
    ...RATE_FIELDS.map((f): [string, unknown, unknown] => [`rate.${f}`, rateA[f], rateB[f]]),
    ["name", x.name, y.name],
    ["notes", x.notes, y.notes],
  ]);
};

/**
 * What changed from circuit `a` (older) to circuit `b` (newer). Added and changed items follow
 * `b`'s order, removed ones `a`'s.
 */
export function diffCircuits(a: Circuit, b: Circuit): CircuitDiff {
  const x = a as Circuit & { notes?: string };
  const y = b as Circuit & { notes?: string };
  const circuit = compareFields([
    ["name", x.name, y.name],
    ["description", x.description, y.description],
    ["notes", x.notes, y.notes],
    ["units.time", x.units.time, y.units.time],
    ["units.amount", x.units.amount, y.units.amount],
    ["volume_fL", x.volume_fL, y.volume_fL],
  ]);
  const species = diffById(a.species, b.species, (s) => s.id, (s) => `initial ${s.initial}`, speciesFields, true);
  const paramRows = (c: Circuit) =>
    Object.entries(c.parameters ?? {}).map(([name, value]) => ({ name, value, ...(c.parameter_info?.[name] ?? {}) }));
  const parameters = diffById(
    paramRows(a), paramRows(b), (p) => p.name, (p) => `= ${p.value}${p.unit ? `, unit ${p.unit}` : ""}`,
    (p, q) => compareFields([["value", p.value, q.value], ["unit", p.unit, q.unit], ["note", p.note, q.note]]), false,
  );
  const reactions = diffById(a.reactions, b.reactions, (r) => r.id, describeReaction, reactionFields, true);
  const sectionEmpty = (s: SectionDiff) => !s.added.length && !s.removed.length && !s.changed.length && !s.reordered;
  return {
    circuit, species, parameters, reactions,
    isEmpty: circuit.length === 0 && sectionEmpty(species) && sectionEmpty(parameters) && sectionEmpty(reactions),
  };
}
