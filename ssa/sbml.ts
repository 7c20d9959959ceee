/**
 * SBML Level 2 and 3 core → circuit (`burstwise.circuit/1`). fast-xml-parser reads the XML (no
 * DTDs, no entities, no evaluation); kinetic laws become `expression` rate laws printed in our
 * formula language and re-parsed by ssa/expr.ts, so the file's text never reaches code.
 * Pure: no I/O. The returned circuit still goes through lib/schemas/circuit.ts at the edge.
 *
 * Units (CONTRACT.md §1, "SBML semantics hold"): a kinetic law is substance per time.
 * - When the model declares a mole-based substance unit and every species lives in compartments of
 *   one litre-based size V, the circuit is in nM (or µM) with volume_fL = V: a species symbol is
 *   κ·y (concentration, κ = our unit / the file's concentration unit) or κ·V·y (with
 *   hasOnlySubstanceUnits), and the rate law is f = KL / (κ·V) per our time unit.
 * - Otherwise substance is molecules (item, dimensionless or undeclared, as CONTRACT.md says) and
 *   the circuit is in molecules: a species symbol is x/N (amount) or x/(N·V) (concentration), with
 *   N molecules per substance unit (1 for item), and f = N·KL. Then f is the propensity, as the
 *   contract's stochastic reading of a kinetic law asks.
 * - Time: the file's time unit becomes s, min or h (undeclared: s), with the factor applied.
 */
import { XMLParser, XMLValidator } from "fast-xml-parser";
import { parse as parseMath } from "mathjs";

import { TIME_SYMBOL } from "./expr-ast";
import { AVOGADRO, compileModel } from "./model";
import {
  attrsOf, bin, childrenOf, evaluateFormula, EXPANSION_LIMITS, MAX_MATHML_DEPTH, MathError, mathSymbols, measureDefinitions, num, printFormula,
  readMath, substitute, sym, tagOf, textOf, translate,
  type ExpansionBudget, type Formula, type MathAst, type TranslateContext, type XmlNode,
} from "./sbml-math";
import { CIRCUIT_FORMAT, isReservedId, reservedIdReason, type AmountUnit, type Circuit, type ParameterInfo, type RateLaw, type Reaction, type TimeUnit } from "./types";
import { makeWarning, type EngineWarning } from "./warnings";

/** Bad or unsupported SBML. The message starts with `sbml:` and names the element. */
export class SbmlError extends Error {
  constructor(message: string) {
    super(message.startsWith("sbml:") ? message : `sbml: ${message}`);
    this.name = "SbmlError";
  }
}

export interface SbmlImportOptions {
  /**
   * Restore rate laws from our own reaction annotations (written by circuitToSbml) when they give
   * the same rates as the MathML (default true). False reads the MathML alone.
   */
  useAnnotations?: boolean;
  /**
   * A time budget for the import, with the caller's clock (ssa/ reads none): past `ms`
   * milliseconds of `now()` the import stops with an SbmlError. The per-formula and per-model
   * bounds (EXPANSION_LIMITS) hold without it.
   */
  timeBudget?: { ms: number; now: () => number };
}

export interface SbmlImport {
  circuit: Circuit;
  /** Things that were approximated or dropped, each with a stable code (README, "Warnings"). */
  warnings: EngineWarning[];
  level: number;
  version: number;
}

/** True when a file's text is XML (first non-blank character `<`), i.e. SBML rather than JSON. */
export function isSbmlText(text: string): boolean {
  const s = text.replace(/^\uFEFF/, "").trimStart();
  return s.startsWith("<");
}

const MAX_XML_CHARS = 50_000_000;
/**
 * How deep elements may nest: MathML's own bound plus the SBML elements around a formula, with room
 * for annotations and notes. The XML parser's default (100) would fail on a plain error instead.
 */
const MAX_XML_DEPTH = MAX_MATHML_DEPTH + 60;
/** Local name of the element circuitToSbml puts in each reaction's <annotation>. */
export const RATE_ANNOTATION = "burstwiseRateLaw";
export const RATE_ANNOTATION_NS = "urn:burstwise:sbml:rate-law:1";
/** Local name of the element circuitToSbml puts in a parameter's <annotation> (its unit text). */
export const PARAMETER_ANNOTATION = "burstwiseParameterInfo";
export const PARAMETER_ANNOTATION_NS = "urn:burstwise:sbml:parameter-info:1";
/**
 * Above this cell volume (1 nL, in fL) an imported compartment is far larger than a cell: counts
 * become so large that exact stochastic runs are out of reach, which usually means a size written
 * in another unit than the file declares (e.g. a Level 2 file with size="1", read as 1 litre).
 */
const LARGE_VOLUME_FL = 1e6;
/** Limits of `parameter_info` texts in the circuit file (lib/schemas/circuit-rules.ts). */
const MAX_UNIT_TEXT = 40;
const MAX_NOTE_TEXT = 500;

/** Parses an SBML document into a circuit. @throws SbmlError naming the element at fault. */
export function sbmlToCircuit(xml: string, options: SbmlImportOptions = {}): SbmlImport {
  const root = parseDocument(xml);
  const reader = new SbmlReader(root, options);
  return reader.read();
}

function parseDocument(xml: string): XmlNode {
  if (typeof xml !== "string") throw new SbmlError("sbml: expected XML text");
  if (xml.length > MAX_XML_CHARS) throw new SbmlError(`sbml: file larger than ${MAX_XML_CHARS} characters`);
  rejectDeclarations(xml);
  const valid = XMLValidator.validate(xml);
  if (valid !== true) {
    const e = valid.err;
    throw new SbmlError(`sbml: not well-formed XML (line ${e.line}, column ${e.col}): ${e.msg}`);
  }
  const parser = new XMLParser({
    preserveOrder: true,
    ignoreAttributes: false,
    attributeNamePrefix: "",
    parseTagValue: false,
    parseAttributeValue: false,
    trimValues: true,
    removeNSPrefix: true,
    // Only the five predefined entities can occur: declarations are refused above.
    processEntities: true,
    htmlEntities: false,
    maxNestedTags: MAX_XML_DEPTH,
  });
  let doc: XmlNode[];
  try {
    doc = parser.parse(xml) as XmlNode[];
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    if (/nested/i.test(msg)) throw new SbmlError(`sbml: elements nested more than ${MAX_XML_DEPTH} deep`);
    throw new SbmlError(`sbml: cannot read the XML (${msg})`);
  }
  const elementsTop = doc.filter((n) => !tagOf(n).startsWith("?") && tagOf(n) !== "#comment" && tagOf(n) !== "#text");
  const root = elementsTop[0];
  if (!root) throw new SbmlError("sbml: the document is empty");
  if (tagOf(root) !== "sbml") throw new SbmlError(`sbml: the root element is <${tagOf(root)}>, not <sbml>`);
  return root;
}

/**
 * Refuses document type declarations and everything inside them (<!DOCTYPE>, <!ENTITY>, <!ELEMENT>,
 * however they are spaced or split over lines): SBML needs none, and entity definitions are how a
 * small file expands into a huge one. Comments and CDATA sections are skipped, not refused.
 */
function rejectDeclarations(xml: string): void {
  let i = xml.indexOf("<!");
  while (i >= 0) {
    if (xml.startsWith("<!--", i)) {
      const end = xml.indexOf("-->", i + 4);
      if (end < 0) return; // unterminated: the validator names it
      i = xml.indexOf("<!", end + 3);
    } else if (xml.startsWith("<![CDATA[", i)) {
      const end = xml.indexOf("]]>", i + 9);
      if (end < 0) return;
      i = xml.indexOf("<!", end + 3);
    } else {
      const line = xml.slice(0, i).split("\n").length;
      const word = /^<!\s*([A-Za-z]*)/.exec(xml.slice(i, i + 40))?.[1]?.toUpperCase() || "…";
      throw new SbmlError(`sbml: line ${line}: <!${word}> declarations are not allowed (SBML needs no DOCTYPE or entity declarations)`);
    }
  }
}

const elems = (n: XmlNode | undefined, tag?: string): XmlNode[] =>
  n ? childrenOf(n).filter((c) => (tag ? tagOf(c) === tag : tagOf(c) !== "#text" && tagOf(c) !== "#comment")) : [];
const child = (n: XmlNode | undefined, tag: string): XmlNode | undefined => elems(n, tag)[0];
const listOf = (model: XmlNode, list: string, item: string): XmlNode[] => elems(child(model, list), item);

interface UnitInfo {
  kind: "mole" | "item" | "litre" | "second" | "dimensionless" | "other";
  /** Size of the unit in the base (mol, item, L, s). */
  factor: number;
}

const BASE_UNITS: Record<string, UnitInfo> = {
  mole: { kind: "mole", factor: 1 },
  item: { kind: "item", factor: 1 },
  litre: { kind: "litre", factor: 1 },
  liter: { kind: "litre", factor: 1 },
  second: { kind: "second", factor: 1 },
  dimensionless: { kind: "dimensionless", factor: 1 },
};

interface SpeciesInfo {
  id: string;
  name?: string;
  compartment: string;
  hasOnlySubstanceUnits: boolean;
  boundary: boolean;
  constant: boolean;
  initialAmount?: number;
  initialConcentration?: number;
  substanceUnits?: string;
}

interface CompartmentInfo {
  id: string;
  size?: number;
  volume?: UnitInfo;
  spatialDimensions: number;
}

/** Ids that survive mathjs parsing as plain symbols in every position we print them (and are not the time `t`). */
function isSafeSymbol(id: string): boolean {
  if (id === TIME_SYMBOL) return false; // t is the time in formulas: an SBML id "t" is renamed
  try {
    const n = parseMath(`${id} + ${id} * ${id} - ${id}^2 / exp(${id})`) as unknown as {
      type: string; fn?: string; args?: { type: string; name?: string; fn?: string; args?: unknown[] }[];
    };
    const isSym = (x: unknown) => {
      const y = x as { type?: string; name?: string };
      return y?.type === "SymbolNode" && y.name === id;
    };
    if (n.type !== "OperatorNode" || n.fn !== "subtract" || !n.args) return false;
    const [addNode, divNode] = n.args as unknown as { fn: string; args: { fn?: string; args: unknown[] }[] }[];
    if (addNode.fn !== "add" || divNode.fn !== "divide") return false;
    const mul = addNode.args[1] as { fn?: string; args: unknown[] };
    const pow = divNode.args[0] as { fn?: string; args: unknown[] };
    return isSym(addNode.args[0]) && mul.fn === "multiply" && isSym(mul.args[0]) && isSym(mul.args[1]) && pow.fn === "pow" && isSym(pow.args[0]);
  } catch {
    return false;
  }
}

/** A fixed pseudo-random sequence (for comparing rate laws at sample states; no Math.random). */
function sampleSequence(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    // xorshift32 (Marsaglia 2003), good enough to spread test points.
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    return s / 4294967296;
  };
}

class SbmlReader {
  private readonly warnings: EngineWarning[] = [];
  private level = 0;
  private version = 0;
  private model!: XmlNode;
  private unitDefs = new Map<string, UnitInfo>();
  private functions = new Map<string, { params: string[]; body: MathAst }>();
  private compartments = new Map<string, CompartmentInfo>();
  private species = new Map<string, SpeciesInfo>();
  private globalParams = new Map<string, { value?: number; constant: boolean }>();
  /** Unit text and note of SBML global parameters (their <notes> and our annotation), by SBML id. */
  private paramInfo = new Map<string, ParameterInfo>();
  private assignmentRules = new Map<string, MathAst>();
  private initialAssignments = new Map<string, MathAst>();
  private reactionIds = new Set<string>();
  /** Parameters of the circuit being built (SBML globals, renamed locals, compartments, fixed species). */
  private params = new Map<string, number>();
  /** SBML id → id in the circuit (renamed when mathjs would misread it). */
  private rename = new Map<string, string>();
  private usedIds = new Set<string>();
  // Unit mapping, decided in decideUnits().
  private amountUnit: AmountUnit = "molecules";
  private timeUnit: TimeUnit = "s";
  private volumeFL: number | undefined;
  /** Our time unit over the file's, both in seconds. */
  private timeFactor = 1;
  /** Concentration mapping: SBML concentration = kappa · y. */
  private kappa = 1;
  /** Concentration mapping: the one compartment size V (SBML units). */
  private concVolume = 1;
  private concCompartment = "";
  /** Molecules mapping: molecules per SBML substance unit. */
  private perSubstance = 1;
  private concentrationMapping = false;

  /** Work of every formula translation of this import (EXPANSION_LIMITS, the caller's time budget). */
  private readonly budget: ExpansionBudget;
  /** Initial values already worked out (a chain of assignments must not be evaluated once per path). */
  private initialValues = new Map<string, number>();

  constructor(private readonly root: XmlNode, private readonly options: SbmlImportOptions) {
    const tb = options.timeBudget;
    const start = tb?.now();
    this.budget = {
      steps: 0,
      ...(tb ? { overTime: () => tb.now() - (start as number) > tb.ms, timeBudget: `${tb.ms / 1000} s` } : {}),
    };
  }

  /** @throws SbmlError once the caller's time budget is spent (checked between elements too). */
  private checkTime(where: string): void {
    if (this.budget.overTime?.()) throw new SbmlError(`sbml: ${where}: the import took longer than ${this.budget.timeBudget}; the model is too large`);
  }

  /** @throws SbmlError for an id the circuit cannot use (RESERVED_IDS). */
  private checkId(kind: string, id: string): void {
    if (isReservedId(id)) throw new SbmlError(`sbml: ${kind} "${id}": ${reservedIdReason(id)}`);
  }

  read(): SbmlImport {
    const a = attrsOf(this.root);
    this.level = Number(a.level);
    this.version = Number(a.version);
    if (this.level !== 2 && this.level !== 3) {
      throw new SbmlError(`sbml: only Level 2 and Level 3 are supported (this file is Level ${a.level ?? "?"})`);
    }
    const model = child(this.root, "model");
    if (!model) throw new SbmlError("sbml: <model> is missing");
    this.model = model;
    this.rejectUnsupported();
    this.readUnits();
    this.readFunctions();
    this.readCompartments();
    this.readSpecies();
    this.readParameters();
    this.readRules();
    this.readInitialAssignments();
    for (const r of listOf(model, "listOfReactions", "reaction")) {
      const rid = attrsOf(r).id ?? "";
      this.checkId("reaction", rid);
      this.reactionIds.add(rid);
    }
    for (const id of [...this.species.keys(), ...this.globalParams.keys(), ...this.compartments.keys(), ...this.reactionIds]) {
      this.usedIds.add(id);
    }
    this.decideUnits();

    const circuitSpecies = this.buildSpecies();
    const reactions = this.buildReactions();
    if (reactions.length === 0) throw new SbmlError("sbml: the model has no reaction that changes a species");
    const parameters: Record<string, number> = {};
    for (const [k, v] of this.params) parameters[k] = v;
    const ma = attrsOf(model);
    const description = notesText(child(model, "notes"));
    const circuit: Circuit = {
      format: CIRCUIT_FORMAT,
      ...(ma.name || ma.id ? { name: (ma.name || ma.id).slice(0, 200) } : {}),
      ...(description ? { description: description.slice(0, 10000) } : {}),
      units: { time: this.timeUnit, amount: this.amountUnit },
      ...(this.volumeFL !== undefined ? { volume_fL: this.volumeFL } : {}),
      species: circuitSpecies,
      parameters,
      reactions,
    };
    if (this.options.useAnnotations !== false) this.restoreAnnotatedLaws(circuit);
    this.finalParameters(circuit);
    return { circuit: this.withParameterInfo(circuit), warnings: this.warnings, level: this.level, version: this.version };
  }

  /** The circuit with `parameter_info` (after `parameters`) for the kept parameters that have a unit text or note. */
  private withParameterInfo(circuit: Circuit): Circuit {
    const info: Record<string, ParameterInfo> = {};
    for (const [g, pi] of this.paramInfo) {
      const id = this.idFor(g);
      if (Object.prototype.hasOwnProperty.call(circuit.parameters ?? {}, id) && !this.assignmentRules.has(g)) info[id] = pi;
    }
    if (Object.keys(info).length === 0) return circuit;
    const { reactions, ...head } = circuit;
    return { ...head, parameter_info: info, reactions };
  }

  private rejectUnsupported(): void {
    const events = listOf(this.model, "listOfEvents", "event");
    if (events.length) throw new SbmlError(`sbml: event "${attrsOf(events[0]).id ?? "?"}": events are not supported`);
    const model = this.model;
    for (const r of elems(child(model, "listOfRules"))) {
      const tag = tagOf(r);
      const v = attrsOf(r).variable;
      if (tag === "rateRule") throw new SbmlError(`sbml: rateRule for "${v}": rate rules are not supported`);
      if (tag === "algebraicRule") throw new SbmlError("sbml: algebraicRule: algebraic rules are not supported");
    }
    const conv = attrsOf(model).conversionFactor;
    if (conv) throw new SbmlError(`sbml: model conversionFactor "${conv}" is not supported`);
  }

  private resolveUnit(ref: string | undefined): UnitInfo | undefined {
    if (!ref) return undefined;
    // Level 2's built-in names (substance, volume, time) mean the model's redefinition or the default.
    if (this.level === 2 && (ref === "substance" || ref === "volume" || ref === "time")) return this.level2Unit(ref);
    return this.unitDefs.get(ref) ?? BASE_UNITS[ref] ?? { kind: "other", factor: 1 };
  }

  private readUnits(): void {
    for (const ud of listOf(this.model, "listOfUnitDefinitions", "unitDefinition")) {
      const id = attrsOf(ud).id;
      if (!id) continue;
      const units = elems(child(ud, "listOfUnits"), "unit").map((u) => {
        const a = attrsOf(u);
        return {
          kind: a.kind ?? "",
          exponent: a.exponent === undefined ? 1 : Number(a.exponent),
          scale: a.scale === undefined ? 0 : Number(a.scale),
          multiplier: a.multiplier === undefined ? 1 : Number(a.multiplier),
        };
      });
      let info: UnitInfo = { kind: "other", factor: 1 };
      if (units.length === 1) {
        const u = units[0];
        const size = u.multiplier * Math.pow(10, u.scale);
        if ((u.kind === "mole" || u.kind === "item" || u.kind === "second" || u.kind === "litre" || u.kind === "liter") && u.exponent === 1) {
          info = { kind: u.kind === "liter" ? "litre" : u.kind, factor: size };
        } else if ((u.kind === "metre" || u.kind === "meter") && u.exponent === 3) {
          info = { kind: "litre", factor: 1000 * size ** 3 };
        } else if (u.kind === "dimensionless") {
          info = { kind: "dimensionless", factor: size };
        }
      }
      this.unitDefs.set(id, info);
    }
  }

  private readFunctions(): void {
    for (const fd of listOf(this.model, "listOfFunctionDefinitions", "functionDefinition")) {
      const id = attrsOf(fd).id ?? "?";
      const math = child(fd, "math");
      if (!math) throw new SbmlError(`sbml: functionDefinition "${id}": <math> is missing`);
      let ast: MathAst;
      try {
        ast = readMath(math);
      } catch (e) {
        throw this.mathError(`functionDefinition "${id}"`, e);
      }
      if (ast.t !== "lambda") throw new SbmlError(`sbml: functionDefinition "${id}": <math> must hold a <lambda>`);
      this.functions.set(id, { params: ast.params, body: ast.body });
    }
    // Refuse by name a definition no use could expand within bounds (each doubling of a chain of
    // definitions doubles the formula), before any kinetic law asks for it.
    let sizes: Map<string, { size: number; depth: number }>;
    try {
      sizes = measureDefinitions(this.functions);
    } catch (e) {
      throw this.mathError("listOfFunctionDefinitions", e);
    }
    for (const [id, m] of sizes) {
      if (m.size > EXPANSION_LIMITS.maxNodes) throw new SbmlError(`sbml: functionDefinition "${id}": expands to more than ${EXPANSION_LIMITS.maxNodes} nodes`);
      if (m.depth > EXPANSION_LIMITS.maxDepth) throw new SbmlError(`sbml: functionDefinition "${id}": expands to a formula nested more than ${EXPANSION_LIMITS.maxDepth} deep`);
    }
  }

  /**
   * A Level 2 built-in unit: the model's redefinition of `substance`, `volume` or `time` when it
   * has one, else the default of SBML L2V4 §4.4.3 (Table 4: substance = mole, volume = litre,
   * time = second; the same in L2V1–V5). Level 3 has no defaults: undefined there.
   */
  private level2Unit(name: "substance" | "volume" | "time"): UnitInfo | undefined {
    if (this.level !== 2) return undefined;
    return this.unitDefs.get(name) ?? BASE_UNITS[{ substance: "mole", volume: "litre", time: "second" }[name]];
  }

  private readCompartments(): void {
    const modelVolume = this.level === 3 ? this.resolveUnit(attrsOf(this.model).volumeUnits) : this.level2Unit("volume");
    for (const c of listOf(this.model, "listOfCompartments", "compartment")) {
      const a = attrsOf(c);
      const id = a.id;
      if (!id) throw new SbmlError("sbml: a <compartment> has no id");
      this.checkId("compartment", id);
      const size = a.size !== undefined ? parseNumberAttr(a.size, `compartment "${id}" size`) : undefined;
      const dims = a.spatialDimensions === undefined ? 3 : Number(a.spatialDimensions);
      const units = a.units ? this.resolveUnit(a.units) : dims === 3 ? modelVolume : undefined;
      this.compartments.set(id, { id, size, volume: units, spatialDimensions: dims });
    }
  }

  private readSpecies(): void {
    for (const s of listOf(this.model, "listOfSpecies", "species")) {
      const a = attrsOf(s);
      const id = a.id;
      if (!id) throw new SbmlError("sbml: a <species> has no id");
      this.checkId("species", id);
      if (!a.compartment || !this.compartments.has(a.compartment)) {
        throw new SbmlError(`sbml: species "${id}": unknown compartment "${a.compartment ?? ""}"`);
      }
      if (a.conversionFactor) throw new SbmlError(`sbml: species "${id}": conversionFactor is not supported`);
      this.species.set(id, {
        id,
        name: a.name,
        compartment: a.compartment,
        hasOnlySubstanceUnits: a.hasOnlySubstanceUnits === "true",
        boundary: a.boundaryCondition === "true",
        constant: a.constant === "true",
        initialAmount: a.initialAmount !== undefined ? parseNumberAttr(a.initialAmount, `species "${id}" initialAmount`) : undefined,
        initialConcentration:
          a.initialConcentration !== undefined ? parseNumberAttr(a.initialConcentration, `species "${id}" initialConcentration`) : undefined,
        substanceUnits: a.substanceUnits,
      });
    }
    if (this.species.size === 0) throw new SbmlError("sbml: the model has no species");
  }

  private readParameters(): void {
    for (const p of listOf(this.model, "listOfParameters", "parameter")) {
      const a = attrsOf(p);
      const id = a.id;
      if (!id) throw new SbmlError("sbml: a <parameter> has no id");
      this.checkId("parameter", id);
      this.globalParams.set(id, {
        value: a.value !== undefined ? parseNumberAttr(a.value, `parameter "${id}" value`) : undefined,
        constant: a.constant !== "false",
      });
      const note = paragraphLines(child(p, "notes")).slice(0, MAX_NOTE_TEXT);
      const unit = elems(child(p, "annotation")).find((n) => tagOf(n) === PARAMETER_ANNOTATION);
      const unitText = unit ? (attrsOf(unit).unit ?? "").slice(0, MAX_UNIT_TEXT) : "";
      if (note || unitText) this.paramInfo.set(id, { ...(unitText ? { unit: unitText } : {}), ...(note ? { note } : {}) });
    }
  }

  private readRules(): void {
    for (const r of elems(child(this.model, "listOfRules"))) {
      const tag = tagOf(r);
      if (tag !== "assignmentRule") continue;
      const v = attrsOf(r).variable;
      if (!v) throw new SbmlError("sbml: an assignmentRule has no variable");
      const math = child(r, "math");
      if (!math) throw new SbmlError(`sbml: assignmentRule for "${v}": <math> is missing`);
      try {
        this.assignmentRules.set(v, readMath(math));
      } catch (e) {
        throw this.mathError(`assignmentRule for "${v}"`, e);
      }
      if (this.compartments.has(v)) throw new SbmlError(`sbml: assignmentRule for compartment "${v}": variable compartment sizes are not supported`);
    }
  }

  private readInitialAssignments(): void {
    for (const ia of listOf(this.model, "listOfInitialAssignments", "initialAssignment")) {
      const s = attrsOf(ia).symbol;
      if (!s) throw new SbmlError("sbml: an initialAssignment has no symbol");
      if (!this.species.has(s) && !this.globalParams.has(s) && !this.compartments.has(s)) {
        throw new SbmlError(`sbml: initialAssignment for "${s}": only species, parameters and compartments are supported`);
      }
      const math = child(ia, "math");
      if (!math) throw new SbmlError(`sbml: initialAssignment for "${s}": <math> is missing`);
      try {
        this.initialAssignments.set(s, readMath(math));
      } catch (e) {
        throw this.mathError(`initialAssignment for "${s}"`, e);
      }
    }
  }

  private mathError(where: string, e: unknown): SbmlError {
    if (e instanceof MathError) return new SbmlError(`sbml: ${where}: ${e.message}`);
    if (e instanceof SbmlError) return e;
    throw e;
  }

  /**
   * The SBML value of a symbol at the start (initial assignment, else assignment rule, else the
   * declared value), in the file's units: species as concentration or amount per
   * hasOnlySubstanceUnits, compartments as size.
   */
  private initialValue(id: string, seen = new Set<string>()): number {
    const known = this.initialValues.get(id);
    if (known !== undefined) return known;
    const v = this.computeInitialValue(id, seen);
    this.initialValues.set(id, v);
    return v;
  }

  private computeInitialValue(id: string, seen: Set<string>): number {
    if (seen.has(id)) throw new SbmlError(`sbml: initial value of "${id}" depends on itself`);
    seen.add(id);
    const math = this.initialAssignments.get(id) ?? this.assignmentRules.get(id);
    if (math) {
      // Initial values are at t = 0, where the time symbol reads 0 (evaluateFormula).
      const ctx: TranslateContext = { functions: this.functions, budget: this.budget, timeFactor: 1, symbol: (s) => sym(s) };
      let f: Formula;
      try {
        f = translate(math, ctx);
      } catch (e) {
        throw this.mathError(this.initialAssignments.has(id) ? `initialAssignment for "${id}"` : `assignmentRule for "${id}"`, e);
      }
      const v = evaluateFormula(f, (s) => {
        if (!this.species.has(s) && !this.globalParams.has(s) && !this.compartments.has(s)) {
          throw new SbmlError(`sbml: initial value of "${id}": unknown symbol "${s}"`);
        }
        return this.initialValue(s, new Set(seen));
      });
      if (!Number.isFinite(v)) throw new SbmlError(`sbml: initial value of "${id}" is not a finite number (${v})`);
      return v;
    }
    const c = this.compartments.get(id);
    if (c) {
      if (c.size === undefined) throw new SbmlError(`sbml: compartment "${id}" has no size`);
      return c.size;
    }
    const p = this.globalParams.get(id);
    if (p) {
      if (p.value === undefined) throw new SbmlError(`sbml: parameter "${id}" has no value`);
      return p.value;
    }
    const s = this.species.get(id);
    if (s) {
      const amountGiven = s.initialAmount !== undefined;
      const concGiven = s.initialConcentration !== undefined;
      if (!amountGiven && !concGiven) throw new SbmlError(`sbml: species "${id}" has no initialAmount or initialConcentration`);
      if (s.hasOnlySubstanceUnits) {
        return amountGiven ? (s.initialAmount as number) : (s.initialConcentration as number) * this.initialValue(s.compartment, new Set(seen));
      }
      return concGiven ? (s.initialConcentration as number) : (s.initialAmount as number) / this.initialValue(s.compartment, new Set(seen));
    }
    throw new SbmlError(`sbml: unknown symbol "${id}"`);
  }

  /** A species that reactions do not change: boundary, constant, or set by an assignment rule. */
  private isFixed(s: SpeciesInfo): boolean {
    return s.boundary || s.constant || this.assignmentRules.has(s.id);
  }

  private decideUnits(): void {
    const ma = attrsOf(this.model);
    const substance = this.level === 3 ? this.resolveUnit(ma.extentUnits ?? ma.substanceUnits) : this.level2Unit("substance");
    const time = this.level === 3 ? this.resolveUnit(ma.timeUnits) : this.level2Unit("time");
    // Per-species substance units must agree with the kinetic laws' (extent) units.
    for (const s of this.species.values()) {
      const unit = this.resolveUnit(s.substanceUnits);
      if (unit && substance && (unit.kind !== substance.kind || Math.abs(unit.factor / substance.factor - 1) > 1e-12)) {
        throw new SbmlError(`sbml: species "${s.id}": substanceUnits differ from the model's; not supported`);
      }
    }
    // Time.
    let seconds = 1;
    if (time) {
      if (time.kind === "second") seconds = time.factor;
      else this.warnings.push(makeWarning("sbml-time-unit-unknown", "the time unit is not based on seconds; read as seconds", "units.time"));
    } else {
      this.warnings.push(makeWarning("sbml-no-time-unit", "no time unit declared; read as seconds", "units.time"));
    }
    this.timeUnit = seconds >= 3600 * (1 - 1e-12) ? "h" : seconds >= 60 * (1 - 1e-12) ? "min" : "s";
    const ours = { s: 1, min: 60, h: 3600 }[this.timeUnit];
    this.timeFactor = Math.abs(ours / seconds - 1) < 1e-12 ? 1 : ours / seconds;

    // Concentration mapping: mole substance, one litre-based compartment size for dynamic species.
    const dynamicCompartments = new Set<string>();
    for (const s of this.species.values()) if (!this.isFixed(s)) dynamicCompartments.add(s.compartment);
    let volumeL: number | undefined;
    let sizeSbml: number | undefined;
    let ok = substance?.kind === "mole";
    for (const cid of dynamicCompartments) {
      const c = this.compartments.get(cid) as CompartmentInfo;
      if (!ok) break;
      if (c.spatialDimensions !== 3 || c.volume?.kind !== "litre" || this.initialAssignments.has(cid)) {
        ok = false;
        break;
      }
      const size = c.size;
      if (size === undefined || !(size > 0)) {
        ok = false;
        break;
      }
      if (sizeSbml !== undefined && size !== sizeSbml) ok = false;
      sizeSbml = size;
      volumeL = size * c.volume.factor;
    }
    if (ok && substance && volumeL !== undefined && sizeSbml !== undefined) {
      const cUnit = substance.factor / ((volumeL / sizeSbml) as number); // mol/L per SBML concentration unit
      const molar = cUnit >= 1e-6 * (1 - 1e-9) ? 1e-6 : 1e-9;
      this.concentrationMapping = true;
      this.amountUnit = molar === 1e-6 ? "uM" : "nM";
      const kappa = molar / cUnit;
      this.kappa = Math.abs(kappa - 1) < 1e-9 ? 1 : kappa;
      this.concVolume = sizeSbml;
      this.concCompartment = [...dynamicCompartments][0];
      this.volumeFL = roundSig(volumeL / 1e-15);
      if (this.volumeFL > LARGE_VOLUME_FL) {
        const perNm = this.volumeFL * 1e-15 * 1e-9 * AVOGADRO;
        this.warnings.push(makeWarning("sbml-volume-large",
          `the compartment holds ${volumeL} L, so 1 nM is ${perNm.toPrecision(3)} molecules; stochastic runs will be slow or refused (is the size meant in litres?)`, "volume_fL"));
      }
      return;
    }
    this.amountUnit = "molecules";
    if (substance?.kind === "mole") this.perSubstance = AVOGADRO * substance.factor;
    else if (substance?.kind === "item") this.perSubstance = substance.factor;
    else this.perSubstance = 1;
    if (substance === undefined) {
      this.warnings.push(makeWarning("sbml-no-substance-unit", "no substance unit declared; amounts read as molecules", "units.amount"));
    } else if (substance.kind !== "mole" && substance.kind !== "item" && substance.kind !== "dimensionless") {
      this.warnings.push(makeWarning("sbml-substance-unit-unknown", "the substance unit is neither mole nor item; amounts read as molecules", "units.amount"));
    }
    // A single litre-based compartment still tells the cell volume, for reference.
    if (dynamicCompartments.size === 1) {
      const c = this.compartments.get([...dynamicCompartments][0]) as CompartmentInfo;
      if (c.volume?.kind === "litre" && c.size !== undefined && c.size > 0) this.volumeFL = roundSig((c.size * c.volume.factor) / 1e-15);
    }
  }

  /** A circuit id for an SBML id: the same unless mathjs would misread it. */
  private idFor(sbmlId: string): string {
    const known = this.rename.get(sbmlId);
    if (known) return known;
    let id = sbmlId;
    if (!isSafeSymbol(id)) {
      id = `${sbmlId}_`;
      while (this.usedIds.has(id) || !isSafeSymbol(id)) id += "_";
      this.usedIds.add(id);
      this.warnings.push(makeWarning("sbml-id-renamed", `id "${sbmlId}" renamed "${id}" (reserved in formulas)`));
    }
    this.rename.set(sbmlId, id);
    return id;
  }

  private freshId(base: string): string {
    let id = base;
    let k = 2;
    while (this.usedIds.has(id) || !isSafeSymbol(id)) id = `${base}_${k++}`;
    this.usedIds.add(id);
    return id;
  }

  private buildSpecies(): Circuit["species"] {
    const out: Circuit["species"] = [];
    for (const s of this.species.values()) {
      if (this.isFixed(s)) continue;
      const v = this.initialValue(s.id);
      // Scale only when the units ask for it, so plain numbers survive a round trip bit for bit.
      let initial = v;
      if (this.concentrationMapping) {
        if (s.hasOnlySubstanceUnits) initial = cleanNumber(initial / this.concVolume);
        if (this.kappa !== 1) initial = cleanNumber(initial / this.kappa);
      } else {
        if (!s.hasOnlySubstanceUnits) initial = cleanNumber(initial * this.initialValue(s.compartment));
        if (this.perSubstance !== 1) initial = cleanNumber(initial * this.perSubstance);
      }
      if (!(initial >= 0)) throw new SbmlError(`sbml: species "${s.id}": initial value ${initial} is negative`);
      out.push({ id: this.idFor(s.id), ...(s.name ? { name: s.name.slice(0, 200) } : {}), initial });
    }
    if (out.length === 0) throw new SbmlError("sbml: every species is fixed (boundary, constant or set by a rule); nothing to simulate");
    return out;
  }

  /** Our formula for an SBML symbol inside reaction `rid` (locals shadow globals). */
  private symbolFormula(id: string, locals: ReadonlyMap<string, string>, seen: Set<string>): Formula {
    const local = locals.get(id);
    if (local) return sym(local);
    const rule = this.assignmentRules.get(id);
    if (rule) {
      if (seen.has(id)) throw new MathError(`assignment rules for "${id}" refer to each other in a cycle`);
      const next = new Set(seen).add(id);
      return translate(rule, { functions: this.functions, budget: this.budget, timeFactor: this.timeFactor, symbol: (s) => this.symbolFormula(s, new Map(), next) });
    }
    const s = this.species.get(id);
    if (s) {
      if (this.isFixed(s)) return this.parameter(id, this.initialValue(id));
      const y = sym(this.idFor(id));
      if (this.concentrationMapping) {
        // SBML concentration = κ·y; amount = κ·V·y.
        const f = s.hasOnlySubstanceUnits ? bin("*", this.compartmentSymbol(s.compartment), y) : y;
        return this.kappa === 1 ? f : bin("*", num(this.kappa), f);
      }
      // SBML amount = x/N; concentration = x/(N·V).
      let f: Formula = s.hasOnlySubstanceUnits ? y : bin("/", y, this.compartmentSymbol(s.compartment));
      if (this.perSubstance !== 1) f = bin("/", f, num(this.perSubstance));
      return f;
    }
    if (this.compartments.has(id)) return this.compartmentSymbol(id);
    const p = this.globalParams.get(id);
    if (p) return this.parameter(id, this.initialValue(id));
    if (this.reactionIds.has(id)) throw new MathError(`symbol "${id}" is a reaction; reaction rates in formulas are not supported`);
    if (this.functions.has(id)) throw new MathError(`function "${id}" used as a value`);
    throw new MathError(`unknown symbol "${id}"`);
  }

  private compartmentSymbol(cid: string): Formula {
    return this.parameter(cid, this.initialValue(cid));
  }

  private parameter(sbmlId: string, value: number): Formula {
    const id = this.idFor(sbmlId);
    if (!this.params.has(id)) this.params.set(id, value);
    return sym(id);
  }

  private buildReactions(): Reaction[] {
    const out: Reaction[] = [];
    for (const r of listOf(this.model, "listOfReactions", "reaction")) {
      const a = attrsOf(r);
      const rid = a.id;
      if (!rid) throw new SbmlError("sbml: a <reaction> has no id");
      const where = `reaction "${rid}"`;
      this.checkTime(where);
      const reactants = this.stoichiometry(r, "listOfReactants", where);
      const products = this.stoichiometry(r, "listOfProducts", where);
      if (Object.keys(reactants).length === 0 && Object.keys(products).length === 0) {
        this.warnings.push(makeWarning("sbml-reaction-dropped", `${where} changes no dynamic species; dropped`));
        continue;
      }
      const kl = child(r, "kineticLaw");
      if (!kl) throw new SbmlError(`sbml: ${where}: <kineticLaw> is missing`);
      const math = child(kl, "math");
      if (!math) throw new SbmlError(`sbml: ${where} kineticLaw: <math> is missing`);
      const locals = new Map<string, string>();
      for (const lp of [...elems(child(kl, "listOfParameters"), "parameter"), ...elems(child(kl, "listOfLocalParameters"), "localParameter")]) {
        const la = attrsOf(lp);
        if (!la.id) throw new SbmlError(`sbml: ${where} kineticLaw: a local parameter has no id`);
        if (la.value === undefined) throw new SbmlError(`sbml: ${where} kineticLaw: local parameter "${la.id}" has no value`);
        this.checkId(`${where} kineticLaw: local parameter`, la.id);
        const value = parseNumberAttr(la.value, `${where} local parameter "${la.id}" value`);
        const id = this.freshId(`${rid}_${la.id}`);
        this.params.set(id, value);
        locals.set(la.id, id);
      }
      let ast: MathAst;
      try {
        ast = readMath(math);
      } catch (e) {
        throw this.mathError(`${where} kineticLaw`, e);
      }
      const name = a.name ? { name: a.name.slice(0, 200) } : {};
      if (a.fast === "true") this.warnings.push(makeWarning("sbml-fast-ignored", `${where} is marked fast; simulated at its kinetic law's rate like the others`));
      const reversible = a.reversible === undefined ? this.level === 2 : a.reversible === "true";
      const halves = reversible ? splitNetRate(ast) : null;
      const split = halves !== null;
      if (reversible && !split) {
        this.warnings.push(makeWarning("sbml-reversible-clipped", `${where} is reversible with a net rate law; stochastic runs clip negative propensities to 0`));
      }
      const parts: [string, MathAst, Record<string, number>, Record<string, number>][] = halves
        ? [
            [`${rid}_fwd`, halves[0], reactants, products],
            [`${rid}_rev`, halves[1], products, reactants],
          ]
        : [[rid, ast, reactants, products]];
      for (const [id, partAst, re, pr] of parts) {
        let formula: Formula;
        try {
          const body = translate(partAst, { functions: this.functions, budget: this.budget, timeFactor: this.timeFactor, symbol: (s) => this.symbolFormula(s, locals, new Set()) });
          formula = this.toRate(partAst, body);
        } catch (e) {
          throw this.mathError(`${where} kineticLaw`, e);
        }
        const rate: RateLaw = { law: "expression", expression: printFormula(formula) };
        out.push({
          id: split ? this.freshId(id) : rid,
          ...name,
          ...(Object.keys(re).length ? { reactants: re } : {}),
          ...(Object.keys(pr).length ? { products: pr } : {}),
          rate,
        });
      }
      const ann = readRateAnnotation(child(r, "annotation"));
      if (ann && !split) this.annotated.set(rid, ann);
    }
    return out;
  }

  private annotated = new Map<string, RateLaw>();

  /**
   * Kinetic law (substance/time in the file) → our rate f (amount/time in the circuit).
   *
   * Worked example, a Level 2 file with the default units (mol, L, s; SBML L2V4 §4.4.3) and the
   * law KL = cell·k·A·B in mol/s with k in M⁻¹s⁻¹ and V = cell in litres: the circuit is in µM
   * (κ = 1e-6, SBML concentration [A] = κ·yA), so
   *   f = KL / (κ·V) = k·κ²·yA·yB / κ = (k·1e-6)·yA·yB  µM/s,
   * i.e. the constant in µM⁻¹s⁻¹ is k·1e-6, as 1 M⁻¹ = 1e-6 µM⁻¹. The model then takes the
   * propensity a(x) = Ω·f(x/Ω) with Ω = V·N_A·1e-6 molecules per µM (CONTRACT.md §1), which gives
   *   a(x) = k·xA·xB / (N_A·V),
   * the stochastic constant c = k/(N_A·V) of a bimolecular reaction (Gillespie 1977, J. Phys.
   * Chem. 81:2340, eq. 10; Wilkinson, Stochastic Modelling for Systems Biology, §6.6). A first-
   * order constant in s⁻¹ is unchanged (f = k·yA), and a zeroth-order one in M/s becomes k·1e6 µM/s.
   * tests/ssa/sbml-units.test.ts checks all three against these formulas.
   */
  private toRate(ast: MathAst, body: Formula): Formula {
    let f = body;
    let factor = this.timeFactor;
    if (this.concentrationMapping) {
      factor /= this.kappa;
      // f = KL / V: cancel a factor that is the compartment itself, as in "cell * k * S".
      const compartments = new Set([...this.compartments.values()].filter((c) => c.size === this.concVolume && !this.initialAssignments.has(c.id)).map((c) => this.idFor(c.id)));
      const cancelled = cancelFactor(f, (x) => x.k === "sym" && compartments.has(x.id));
      if (cancelled) f = cancelled;
      else f = bin("/", f, this.compartmentSymbol(this.concCompartment));
    } else {
      factor *= this.perSubstance;
    }
    void ast;
    if (Math.abs(factor - 1) > 1e-15) f = bin("*", num(cleanNumber(factor)), f);
    return f;
  }

  private stoichiometry(r: XmlNode, list: string, where: string): Record<string, number> {
    const out: Record<string, number> = {};
    for (const sr of elems(child(r, list), "speciesReference")) {
      const a = attrsOf(sr);
      const sid = a.species;
      if (!sid || !this.species.has(sid)) throw new SbmlError(`sbml: ${where}: unknown species "${sid ?? ""}" in ${list}`);
      if (child(sr, "stoichiometryMath")) throw new SbmlError(`sbml: ${where}: stoichiometryMath is not supported`);
      if (a.id && this.initialAssignments.has(a.id)) throw new SbmlError(`sbml: ${where}: stoichiometry set by initialAssignment is not supported`);
      let nu = 1;
      if (a.stoichiometry !== undefined) nu = parseNumberAttr(a.stoichiometry, `${where} stoichiometry of "${sid}"`);
      else if (this.level === 3) this.warnings.push(makeWarning("sbml-stoichiometry-default", `${where}: stoichiometry of "${sid}" not given; read as 1`));
      if (!(Number.isInteger(nu) && nu > 0)) throw new SbmlError(`sbml: ${where}: stoichiometry of "${sid}" must be a positive integer (got ${nu})`);
      const s = this.species.get(sid) as SpeciesInfo;
      if (this.isFixed(s)) continue;
      const id = this.idFor(sid);
      out[id] = (out[id] ?? 0) + nu;
    }
    return out;
  }

  /**
   * Our own annotations (circuitToSbml) carry the original rate law. Use one only when it gives the
   * same deterministic rates as the MathML at sample states (relative 1e-9), so an edited
   * kinetic law always wins over a stale annotation.
   */
  private restoreAnnotatedLaws(circuit: Circuit): void {
    if (this.annotated.size === 0) return;
    const candidate: Circuit = { ...circuit, reactions: circuit.reactions.map((r) => (this.annotated.has(r.id) ? { ...r, rate: this.annotated.get(r.id) as RateLaw } : r)) };
    let mathModel, annModel;
    try {
      mathModel = compileModel(circuit);
      annModel = compileModel(candidate);
    } catch {
      this.warnings.push(makeWarning("sbml-annotation-ignored", "rate-law annotations ignored (they do not compile)"));
      return;
    }
    const nS = circuit.species.length;
    const nR = circuit.reactions.length;
    const next = sampleSequence(0x5eed);
    const y = new Float64Array(nS);
    const f1 = new Float64Array(nR);
    const f2 = new Float64Array(nR);
    const agrees = new Array<boolean>(nR).fill(true);
    const scale = 1 + Math.max(0, ...circuit.species.map((s) => s.initial), ...Object.values(circuit.parameters ?? {}).map((v) => Math.abs(v)));
    for (let trial = 0; trial < 24; trial++) {
      for (let i = 0; i < nS; i++) y[i] = trial === 0 ? 0 : scale * Math.pow(10, 6 * next() - 4);
      mathModel.rates(y, f1);
      annModel.rates(y, f2);
      for (let j = 0; j < nR; j++) {
        const a = f1[j];
        const b = f2[j];
        if (!(Math.abs(a - b) <= 1e-9 * (Math.abs(a) + Math.abs(b)) + 1e-300) && !(Number.isNaN(a) && Number.isNaN(b))) agrees[j] = false;
      }
    }
    circuit.reactions = circuit.reactions.map((r, j) => {
      if (!this.annotated.has(r.id)) return r;
      if (agrees[j]) return { ...r, rate: this.annotated.get(r.id) as RateLaw };
      this.warnings.push(makeWarning("sbml-annotation-differs", `reaction "${r.id}": annotation differs from the kinetic law; the kinetic law is used`));
      return r;
    });
  }

  /**
   * The circuit's parameters: every SBML global parameter with a value (kept for `--set`, in file
   * order), except those set by assignment rules (inlined), then the helper parameters we made
   * (renamed local parameters, compartment sizes, fixed species) that a formula still uses.
   */
  private finalParameters(circuit: Circuit): void {
    const used = new Set<string>();
    for (const r of circuit.reactions) {
      const rate = r.rate;
      if (rate.law === "expression") {
        for (const m of rate.expression.matchAll(/[A-Za-z_][A-Za-z0-9_]*/g)) used.add(m[0]);
      } else {
        for (const v of Object.values(rate)) if (typeof v === "string") used.add(v);
      }
    }
    const out: Record<string, number> = {};
    for (const [g, p] of this.globalParams) {
      if (this.assignmentRules.has(g)) continue;
      const id = this.idFor(g);
      try {
        out[id] = this.initialValue(g);
      } catch (e) {
        if (used.has(id)) throw e;
        this.warnings.push(makeWarning("sbml-parameter-dropped", `parameter "${g}" has no value and is unused; dropped`));
        void p;
      }
    }
    for (const [k, v] of this.params) if (!(k in out) && used.has(k)) out[k] = v;
    circuit.parameters = out;
  }
}

/**
 * Splits a reversible kinetic law written as a difference, v = a − b (possibly inside a product
 * or over a denominator: c·(a − b), (a − b)/d), into its forward and reverse halves, so each
 * becomes a reaction with a non-negative propensity. Null when the law has no such form.
 */
function splitNetRate(ast: MathAst): [MathAst, MathAst] | null {
  if (ast.t !== "apply") return null;
  if (ast.op === "minus" && ast.args.length === 2) return [ast.args[0], ast.args[1]];
  if (ast.op === "times") {
    for (let i = 0; i < ast.args.length; i++) {
      const inner = splitNetRate(ast.args[i]);
      if (!inner) continue;
      const withArg = (x: MathAst): MathAst => ({ t: "apply", op: "times", args: ast.args.map((a, j) => (j === i ? x : a)) });
      return [withArg(inner[0]), withArg(inner[1])];
    }
  }
  if (ast.op === "divide" && ast.args.length === 2) {
    const inner = splitNetRate(ast.args[0]);
    if (inner) return [{ t: "apply", op: "divide", args: [inner[0], ast.args[1]] }, { t: "apply", op: "divide", args: [inner[1], ast.args[1]] }];
  }
  return null;
}

/** Removes one factor matching `isFactor` from a product tree; null when there is none. */
function cancelFactor(f: Formula, isFactor: (x: Formula) => boolean): Formula | null {
  if (isFactor(f)) return num(1);
  if (f.k === "bin" && f.op === "*") {
    if (isFactor(f.a)) return f.b;
    if (isFactor(f.b)) return f.a;
    const left = cancelFactor(f.a, isFactor);
    if (left) return bin("*", left, f.b);
    const right = cancelFactor(f.b, isFactor);
    if (right) return bin("*", f.a, right);
  }
  if (f.k === "bin" && f.op === "/") {
    const left = cancelFactor(f.a, isFactor);
    if (left) return bin("/", left, f.b);
  }
  return null;
}

function readRateAnnotation(annotation: XmlNode | undefined): RateLaw | null {
  const el = elems(annotation).find((n) => tagOf(n) === RATE_ANNOTATION);
  if (!el) return null;
  const a = attrsOf(el);
  const val = (s: string | undefined): number | string | undefined => {
    if (s === undefined) return undefined;
    if (/^[A-Za-z_][A-Za-z0-9_]*$/.test(s)) return s;
    const v = Number(s);
    return Number.isFinite(v) && s.trim() !== "" ? v : undefined;
  };
  switch (a.law) {
    case "mass_action": {
      const k = val(a.k);
      return k === undefined ? null : { law: "mass_action", k };
    }
    case "hill_activation":
    case "hill_repression": {
      const vmax = val(a.vmax), K = val(a.K), n = val(a.n), basal = val(a.basal);
      if (vmax === undefined || K === undefined || n === undefined || !a.input) return null;
      return { law: a.law, input: a.input, vmax, K, n, ...(basal !== undefined ? { basal } : {}) };
    }
    case "expression":
      return typeof a.expression === "string" && a.expression.length > 0 ? { law: "expression", expression: a.expression } : null;
    default:
      return null;
  }
}

/** Plain text of an SBML <notes> element (XHTML), paragraphs separated by blank lines. */
function notesText(notes: XmlNode | undefined): string {
  if (!notes) return "";
  const paragraphs: string[] = [];
  const walk = (n: XmlNode, acc: string[]) => {
    for (const c of childrenOf(n)) {
      const t = tagOf(c);
      if (t === "#text") acc.push(String(c["#text"]));
      else if (t === "head" || t === "style" || t === "script") continue;
      else if (t === "p" || t === "div" || t === "li" || t === "h1" || t === "h2" || t === "h3") {
        const inner: string[] = [];
        walk(c, inner);
        paragraphs.push(inner.join(" ").replace(/\s+/g, " ").trim());
      } else walk(c, acc);
    }
  };
  const loose: string[] = [];
  walk(notes, loose);
  const text = [...paragraphs, loose.join(" ").replace(/\s+/g, " ").trim()].filter(Boolean).join("\n\n");
  return text;
}

/**
 * The text of a parameter's <notes>, one line per XHTML paragraph (as circuitToSbml writes a
 * note), spaces inside a line kept; notes without paragraphs read as notesText does.
 */
function paragraphLines(notes: XmlNode | undefined): string {
  if (!notes) return "";
  const body = child(notes, "body") ?? child(child(notes, "html"), "body") ?? notes;
  const blocks = elems(body);
  if (blocks.length === 0 || !blocks.every((b) => tagOf(b) === "p")) return notesText(notes);
  const textOfNode = (n: XmlNode): string[] =>
    childrenOf(n).flatMap((c) => (tagOf(c) === "#text" ? [String(c["#text"])] : tagOf(c) === "#comment" ? [] : textOfNode(c)));
  const lines = blocks.map((p) => textOfNode(p).join(" ").replace(/\s*\n\s*/g, " ").trim());
  return lines.join("\n").trim();
}

function parseNumberAttr(s: string, what: string): number {
  const v = Number(s);
  if (s.trim() === "" || !Number.isFinite(v)) throw new SbmlError(`sbml: ${what}: "${s}" is not a finite number`);
  return v;
}

/** Rounds away binary noise from unit arithmetic (1e-24/1e-15 → 1e-9) at 15 significant digits. */
function roundSig(v: number): number {
  return Number(v.toPrecision(15));
}

function cleanNumber(v: number): number {
  const r = roundSig(v);
  return Math.abs(r - v) <= 1e-14 * Math.abs(v) ? r : v;
}

/** Ids a kinetic law's MathML mentions (for callers that list modifiers). */
export function kineticLawSymbols(ast: MathAst): string[] {
  return [...mathSymbols(ast)];
}

export { substitute };
