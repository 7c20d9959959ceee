/**
 * Circuit → SBML Level 3 Version 2 core. Concentration circuits (nM, µM) become one compartment of
 * volume_fL femtolitres with species as concentrations: the substance unit is chosen so that
 * substance per fL is exactly the circuit's unit (1e-24 mol for nM, 1e-21 mol for µM) and every
 * kinetic law is `cell × f(concentrations)`, substance per time as SBML requires. Molecule circuits
 * use the substance unit `item`, species as amounts (hasOnlySubstanceUnits) and kinetic law f.
 * Hill laws are written out in the ratio form vmax·(x/K)^n/(1 + (x/K)^n), whose power has a
 * dimensionless base. Each reaction also carries its original rate law in an annotation
 * (namespace urn:burstwise:sbml:rate-law:1) that sbmlToCircuit restores when it still agrees
 * with the MathML. A parameter's `parameter_info` travels as its SBML <notes> (the note, one XHTML
 * <p> per line) and an annotation (namespace urn:burstwise:sbml:parameter-info:1) with the unit
 * text; empty texts are not written. Pure: no I/O.
 */
import { expressionSpecies, parseExpression } from "./expr";
import { apply, ci, cn, exprToMathML, mathElement } from "./sbml-math";
import { PARAMETER_ANNOTATION, PARAMETER_ANNOTATION_NS, RATE_ANNOTATION, RATE_ANNOTATION_NS } from "./sbml";
import { ModelInputError, type Circuit, type NumberOrParam, type ParameterInfo, type RateLaw } from "./types";

const SBML_NS = "http://www.sbml.org/sbml/level3/version2/core";
const XHTML_NS = "http://www.w3.org/1999/xhtml";

/** Escapes text for XML content and attribute values. */
export function xmlEscape(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&apos;");
}

interface UnitPart {
  kind: string;
  exponent: number;
  scale: number;
  multiplier: number;
}

const TIME_SECONDS = { s: 1, min: 60, h: 3600 } as const;

/**
 * Writes a circuit as an SBML Level 3 Version 2 document.
 * @throws RangeError when an expression does not parse (the circuit should be validated first);
 *   ModelInputError for a circuit with a schedule (SBML events are not written yet, and a file
 *   without them would silently lose the schedule).
 */
export function circuitToSbml(c: Circuit): string {
  if (c.schedule && c.schedule.length > 0) {
    throw new ModelInputError(`schedule: SBML export of a schedule is not available yet; export the circuit file (format "burstwise.circuit/2") instead`);
  }
  const speciesIds = new Set(c.species.map((s) => s.id));
  const params = c.parameters ?? {};
  const taken = new Set<string>([...speciesIds, ...Object.keys(params), ...c.reactions.map((r) => r.id)]);
  let compartment = "cell";
  for (let k = 1; taken.has(compartment); k++) compartment = `cell_${k}`;
  const isConc = c.units.amount !== "molecules";
  const hasVolume = c.volume_fL !== undefined;

  // Units. Concentration unit = substance / volume; time as declared.
  const units = new Map<string, UnitPart[]>();
  const timeId = c.units.time === "s" ? "second" : c.units.time === "min" ? "minute" : "hour";
  if (timeId !== "second") units.set(timeId, [{ kind: "second", exponent: 1, scale: 0, multiplier: TIME_SECONDS[c.units.time] }]);
  const substanceId = !isConc ? "item" : c.units.amount === "nM" ? "substance_nM_fL" : "substance_uM_fL";
  if (isConc) units.set(substanceId, [{ kind: "mole", exponent: 1, scale: c.units.amount === "nM" ? -24 : -21, multiplier: 1 }]);
  if (hasVolume || isConc) units.set("femtolitre", [{ kind: "litre", exponent: 1, scale: -15, multiplier: 1 }]);
  // Parameter units by role, where a parameter has one role only.
  const conc: UnitPart[] = isConc
    ? [{ kind: "mole", exponent: 1, scale: c.units.amount === "nM" ? -9 : -6, multiplier: 1 }, { kind: "litre", exponent: -1, scale: 0, multiplier: 1 }]
    : [{ kind: "item", exponent: 1, scale: 0, multiplier: 1 }];
  const concName = isConc ? c.units.amount : "molecules";
  const perTime: UnitPart = { kind: "second", exponent: -1, scale: 0, multiplier: TIME_SECONDS[c.units.time] };
  const unitFor = (concPower: number): string => {
    const id = concPower === 0 ? `per_${timeId}` : concPower === 1 ? `${concName}_per_${timeId}` : `${concName}_pow${concPower < 0 ? "m" : ""}${Math.abs(concPower)}_per_${timeId}`;
    if (!units.has(id)) units.set(id, [...conc.map((u) => ({ ...u, exponent: u.exponent * concPower })).filter((u) => u.exponent !== 0), perTime]);
    return id;
  };
  const roles = new Map<string, Set<string>>();
  const addRole = (v: NumberOrParam | undefined, unit: string) => {
    if (typeof v !== "string") return;
    if (!roles.has(v)) roles.set(v, new Set());
    (roles.get(v) as Set<string>).add(unit);
  };
  const concUnitId = `${concName}_unit`;
  const exprParams = new Set<string>();
  for (const r of c.reactions) {
    const rate = r.rate;
    if (rate.law === "mass_action") {
      const order = Object.values(r.reactants ?? {}).reduce((a, b) => a + b, 0);
      addRole(rate.k, unitFor(1 - order));
    } else if (rate.law === "expression") {
      for (const m of rate.expression.matchAll(/[A-Za-z_][A-Za-z0-9_]*/g)) exprParams.add(m[0]);
    } else {
      addRole(rate.vmax, unitFor(1));
      addRole(rate.basal, unitFor(1));
      addRole(rate.K, concUnitId);
      addRole(rate.n, "dimensionless");
    }
  }
  for (const [p, set] of roles) if (set.size !== 1 || exprParams.has(p)) roles.delete(p);
  // Units of literal numbers in rate laws (sbml:units on <cn>), so unit checks can follow them.
  const literalUnits: LiteralUnits = {
    concentration: () => {
      units.set(concUnitId, conc);
      return concUnitId;
    },
    rate: (concPower) => unitFor(concPower),
  };
  if ([...roles.values()].some((s) => s.has(concUnitId))) units.set(concUnitId, conc);

  const out: string[] = [];
  out.push(`<?xml version="1.0" encoding="UTF-8"?>`);
  out.push(`<sbml xmlns="${SBML_NS}" level="3" version="2">`);
  const modelAttrs = [
    c.name ? `id="${modelId(c.name)}"` : "", // the model id is optional in Level 3
    c.name ? `name="${xmlEscape(c.name)}"` : "",
    `substanceUnits="${substanceId}"`,
    `timeUnits="${timeId}"`,
    hasVolume || isConc ? `volumeUnits="femtolitre"` : "",
    `extentUnits="${substanceId}"`,
  ].filter(Boolean);
  out.push(`  <model ${modelAttrs.join(" ")}>`);
  if (c.description) {
    out.push(`    <notes><body xmlns="${XHTML_NS}"><p>${xmlEscape(c.description)}</p></body></notes>`);
  }
  if (units.size) {
    out.push(`    <listOfUnitDefinitions>`);
    for (const [id, parts] of units) {
      out.push(`      <unitDefinition id="${id}">`);
      out.push(`        <listOfUnits>`);
      for (const u of parts) {
        out.push(`          <unit kind="${u.kind}" exponent="${u.exponent}" scale="${u.scale}" multiplier="${u.multiplier}"/>`);
      }
      out.push(`        </listOfUnits>`);
      out.push(`      </unitDefinition>`);
    }
    out.push(`    </listOfUnitDefinitions>`);
  }
  out.push(`    <listOfCompartments>`);
  const size = c.volume_fL ?? 1;
  out.push(
    hasVolume || isConc
      ? `      <compartment id="${compartment}" spatialDimensions="3" size="${size}" units="femtolitre" constant="true"/>`
      : // No volume given: a unit-free container of size 1 (molecule amounts never divide by it).
        `      <compartment id="${compartment}" size="1" units="dimensionless" constant="true"/>`,
  );
  out.push(`    </listOfCompartments>`);
  out.push(`    <listOfSpecies>`);
  for (const s of c.species) {
    const name = s.name ? ` name="${xmlEscape(s.name)}"` : "";
    const init = isConc ? `initialConcentration="${s.initial}" hasOnlySubstanceUnits="false"` : `initialAmount="${s.initial}" hasOnlySubstanceUnits="true"`;
    out.push(`      <species id="${s.id}"${name} compartment="${compartment}" ${init} boundaryCondition="false" constant="false"/>`);
  }
  out.push(`    </listOfSpecies>`);
  const paramEntries = Object.entries(params);
  if (paramEntries.length) {
    out.push(`    <listOfParameters>`);
    for (const [id, value] of paramEntries) {
      const role = roles.get(id);
      const u = role ? ` units="${[...role][0]}"` : "";
      const info = parameterInfoXml(c.parameter_info?.[id]);
      if (!info.length) {
        out.push(`      <parameter id="${id}" value="${value}"${u} constant="true"/>`);
        continue;
      }
      out.push(`      <parameter id="${id}" value="${value}"${u} constant="true">`);
      for (const line of info) out.push(`        ${line}`);
      out.push(`      </parameter>`);
    }
    out.push(`    </listOfParameters>`);
  }
  out.push(`    <listOfReactions>`);
  for (const r of c.reactions) {
    const name = r.name ? ` name="${xmlEscape(r.name)}"` : "";
    out.push(`      <reaction id="${r.id}"${name} reversible="false">`);
    out.push(`        <annotation>${annotation(r.rate)}</annotation>`);
    const reactants = r.reactants ?? {};
    const products = r.products ?? {};
    const refs = (list: string, m: Record<string, number>) => {
      const entries = Object.entries(m);
      if (!entries.length) return;
      out.push(`        <${list}>`);
      for (const [sp, nu] of entries) out.push(`          <speciesReference species="${sp}" stoichiometry="${nu}" constant="true"/>`);
      out.push(`        </${list}>`);
    };
    refs("listOfReactants", reactants);
    refs("listOfProducts", products);
    const { math, species } = rateMath(r.rate, r.reactants ?? {}, speciesIds, params, `reactions "${r.id}"`, literalUnits);
    const modifiers = species.filter((s) => !(s in reactants) && !(s in products));
    if (modifiers.length) {
      out.push(`        <listOfModifiers>`);
      for (const m of modifiers) out.push(`          <modifierSpeciesReference species="${m}"/>`);
      out.push(`        </listOfModifiers>`);
    }
    const kl = isConc ? apply("times", ci(compartment), math) : math;
    out.push(`        <kineticLaw>`);
    out.push(`          ${mathElement(kl)}`);
    out.push(`        </kineticLaw>`);
    out.push(`      </reaction>`);
  }
  out.push(`    </listOfReactions>`);
  out.push(`  </model>`);
  out.push(`</sbml>`);
  return out.join("\n") + "\n";
}

function modelId(name: string | undefined): string {
  const base = (name ?? "").replace(/[^A-Za-z0-9_]+/g, "_").replace(/^_+|_+$/g, "");
  if (!base) return "circuit";
  return /^[A-Za-z_]/.test(base) ? base.slice(0, 64) : `m_${base}`.slice(0, 64);
}

interface LiteralUnits {
  /** Unit id of a concentration (or molecule count) literal. */
  concentration(): string;
  /** Unit id of concentration^p per time. */
  rate(concPower: number): string;
}

const numOrCi = (v: NumberOrParam, units: string): string => (typeof v === "number" ? cn(v, units) : ci(v));

/** MathML of a rate law f (amount per time, in the circuit's units) and the species it reads. */
function rateMath(
  rate: RateLaw, reactants: Record<string, number>, speciesIds: Set<string>, params: Record<string, number>, where: string, lit: LiteralUnits,
): { math: string; species: string[] } {
  switch (rate.law) {
    case "mass_action": {
      const order = Object.values(reactants).reduce((a, b) => a + b, 0);
      const factors = [typeof rate.k === "number" ? cn(rate.k, lit.rate(1 - order)) : ci(rate.k)];
      for (const [sp, nu] of Object.entries(reactants)) factors.push(nu === 1 ? ci(sp) : apply("power", ci(sp), cn(nu, "dimensionless")));
      return { math: factors.length === 1 ? factors[0] : apply("times", ...factors), species: Object.keys(reactants) };
    }
    case "hill_activation":
    case "hill_repression": {
      // r = (x/K)^n; activation vmax·r/(1 + r), repression vmax/(1 + r), plus basal.
      const K = typeof rate.K === "number" ? cn(rate.K, lit.concentration()) : ci(rate.K);
      const r = apply("power", apply("divide", ci(rate.input), K), numOrCi(rate.n, "dimensionless"));
      const onePlusR = apply("plus", cn(1, "dimensionless"), r);
      const vmax = typeof rate.vmax === "number" ? cn(rate.vmax, lit.rate(1)) : ci(rate.vmax);
      const core = rate.law === "hill_activation" ? apply("divide", apply("times", vmax, r), onePlusR) : apply("divide", vmax, onePlusR);
      const basal = rate.basal === undefined ? undefined : typeof rate.basal === "number" ? cn(rate.basal, lit.rate(1)) : ci(rate.basal);
      const withBasal = basal === undefined ? core : apply("plus", basal, core);
      return { math: withBasal, species: [rate.input] };
    }
    case "expression": {
      const parsed = parseExpression(rate.expression, {
        isSpecies: (id) => speciesIds.has(id),
        isParameter: (id) => Object.prototype.hasOwnProperty.call(params, id) && !speciesIds.has(id),
      });
      if (!parsed.ok) throw new RangeError(`${where}.rate.expression: ${parsed.reason}`);
      // Every species the formula reads, piecewise conditions included (they become modifiers).
      return { math: exprToMathML(parsed.expr), species: expressionSpecies(parsed.expr) };
    }
  }
}

/**
 * The <notes> (the note, one XHTML paragraph per line) and <annotation> (the unit text) of a
 * parameter, in the order SBML requires; nothing for an absent or empty text.
 */
function parameterInfoXml(info: ParameterInfo | undefined): string[] {
  const out: string[] = [];
  if (info?.note) {
    const paragraphs = info.note.split(/\r?\n/).map((line) => `<p>${xmlEscape(line)}</p>`).join("");
    out.push(`<notes><body xmlns="${XHTML_NS}">${paragraphs}</body></notes>`);
  }
  if (info?.unit) {
    out.push(`<annotation><${PARAMETER_ANNOTATION} xmlns="${PARAMETER_ANNOTATION_NS}" unit="${xmlEscape(info.unit)}"/></annotation>`);
  }
  return out;
}

function annotation(rate: RateLaw): string {
  const attrs: string[] = [`law="${rate.law}"`];
  const put = (k: string, v: NumberOrParam | undefined) => {
    if (v !== undefined) attrs.push(`${k}="${xmlEscape(String(v))}"`);
  };
  if (rate.law === "mass_action") put("k", rate.k);
  else if (rate.law === "expression") put("expression", rate.expression);
  else {
    put("input", rate.input);
    put("vmax", rate.vmax);
    put("K", rate.K);
    put("n", rate.n);
    put("basal", rate.basal);
  }
  return `<${RATE_ANNOTATION} xmlns="${RATE_ANNOTATION_NS}" ${attrs.join(" ")}/>`;
}
