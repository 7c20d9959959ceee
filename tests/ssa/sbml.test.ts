import { spawnSync } from "node:child_process";
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { trajectory } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { isSbmlText, sbmlToCircuit } from "@/ssa/sbml";
import { circuitToSbml } from "@/ssa/sbml-export";
import type { Circuit } from "@/ssa/types";

const load = (path: string) => parseCircuit(JSON.parse(readFileSync(path, "utf8")));
const fixture = (name: string) => readFileSync(`tests/fixtures/${name}`, "utf8");

/** A small PRNG for test inputs only (mulberry32, public domain); fixed seed. */
function mulberry32(seed: number) {
  return () => {
    seed |= 0;
    seed = (seed + 0x6d2b79f5) | 0;
    let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Rates of a circuit at amounts y (model units), by reaction id. */
function ratesById(c: Circuit, y: number[]): Record<string, number> {
  const m = compileModel(c);
  const out = new Float64Array(m.nReactions);
  m.rates(Float64Array.from(y), out);
  return Object.fromEntries(m.reactionIds.map((id, j) => [id, out[j]]));
}

/** Circuits covering every rate law, both amount kinds and all time units. */
const extraCircuits: Circuit[] = [
  parseCircuit({
    format: "burstwise.circuit/1",
    name: "Dimer switch & <friends>",
    description: "Uses \"quotes\", <angle brackets> & ampersands.",
    units: { time: "h", amount: "uM" },
    volume_fL: 42.5,
    species: [{ id: "A", name: "monomer", initial: 0.25 }, { id: "D", initial: 0 }, { id: "G", initial: 1.5 }],
    parameters: { kf: 3.5e-3, kb: 0.125, v: 2, K: 0.4, h: 2.5, b0: 0.01, e: 2 },
    reactions: [
      { id: "dimerise", reactants: { A: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: "kf" } },
      { id: "split", reactants: { D: 1 }, products: { A: 2 }, rate: { law: "mass_action", k: "kb" } },
      { id: "make_A", products: { A: 1 }, rate: { law: "hill_activation", input: "G", vmax: "v", K: "K", n: "h", basal: "b0" } },
      { id: "make_G", name: "feedback", products: { G: 1 }, rate: { law: "hill_repression", input: "D", vmax: 1.25, K: 0.3, n: 3 } },
      { id: "lose_G", reactants: { G: 1 }, rate: { law: "expression", expression: "0.2 * G / (1 + exp(-D)) + sqrt(G) * log(1 + A) - min(A, D)^e / 100 + max(0, pow(G, 0.5) - 1) * 1e-3" } },
      { id: "lose_A", reactants: { A: 1 }, rate: { law: "mass_action", k: 0.05 } },
    ],
  }),
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "s", amount: "molecules" },
    species: [{ id: "X", initial: 7 }, { id: "Y", initial: 3 }],
    parameters: { k: 1e-7, g: 0.1 },
    reactions: [
      { id: "make", products: { X: 1 }, rate: { law: "mass_action", k: 12 } },
      { id: "pair", reactants: { X: 1, Y: 1 }, products: { Y: 2 }, rate: { law: "mass_action", k: "k" } },
      { id: "lose", reactants: { Y: 1 }, rate: { law: "expression", expression: "g * Y - -0.5 * 0" } },
    ],
  }),
];

/** The ring timer with parameter_info: units, a two-line note, XML specials and non-ASCII text. */
function ringWithInfo(): Circuit {
  const c = load("examples/ring-timer.circuit.json");
  return parseCircuit({
    ...c,
    parameter_info: {
      vA: { unit: "nM/min", note: "max. production of A\nfrom the plate-reader fit, run 3" },
      K: { unit: "nM", note: "half-repression level <K> & \"typical\" for tetR-like sites" },
      n: { note: "cooperativity (dimer binding)" },
      g: { unit: "1/min (µ-scale)" },
    },
  });
}

const roundTripCircuits: [string, Circuit][] = [
  ["ring timer", load("examples/ring-timer.circuit.json")],
  ["ring timer 10 fL", load("examples/ring-timer-10fL.circuit.json")],
  ["two-stage reporter", load("examples/two-stage-reporter.circuit.json")],
  ["birth-death", load("examples/birth-death.circuit.json")],
  ["dimer switch (uM, h, all laws)", extraCircuits[0]],
  ["molecules in seconds", extraCircuits[1]],
  ["ring timer with parameter_info", ringWithInfo()],
];

describe("SBML round trip", () => {
  for (const [name, c] of roundTripCircuits) {
    it(`sbmlToCircuit(circuitToSbml(${name})) gives back the same circuit (round trip)`, () => {
      const back = sbmlToCircuit(circuitToSbml(c));
      expect(back.warnings).toEqual([]);
      expect(parseCircuit(back.circuit)).toEqual(c);
    });

    it(`${name}: the MathML alone (annotations ignored) gives the same network and the same rates at random states (1e-12 relative)`, () => {
      const back = parseCircuit(sbmlToCircuit(circuitToSbml(c), { useAnnotations: false }).circuit);
      expect(back.units).toEqual(c.units);
      expect(back.volume_fL).toEqual(c.volume_fL);
      expect(back.species).toEqual(c.species);
      expect(back.reactions.map((r) => [r.id, r.reactants ?? {}, r.products ?? {}])).toEqual(c.reactions.map((r) => [r.id, r.reactants ?? {}, r.products ?? {}]));
      for (const r of back.reactions) expect(r.rate.law).toBe("expression");
      const rnd = mulberry32(2024);
      for (let trial = 0; trial < 50; trial++) {
        const y = c.species.map(() => (trial === 0 ? 0 : Math.pow(10, 4 * rnd() - 2)));
        const want = ratesById(c, y);
        const got = ratesById(back, y);
        for (const id of Object.keys(want)) {
          expect(Math.abs(got[id] - want[id])).toBeLessThanOrEqual(1e-12 * Math.abs(want[id]) + 1e-300);
        }
      }
    });
  }

  it("a round-tripped circuit replays the same stochastic trajectories for a seed (ring timer, two-stage)", () => {
    for (const c of [load("examples/ring-timer.circuit.json"), load("examples/two-stage-reporter.circuit.json")]) {
      const back = parseCircuit(sbmlToCircuit(circuitToSbml(c)).circuit);
      const opts = { method: "ssa" as const, tEnd: 200, dt: 10, seed: 4242 };
      for (const index of [0, 3]) {
        expect(trajectory(compileModel(back), opts, index).values).toEqual(trajectory(compileModel(c), opts, index).values);
      }
    }
  });

  it("parameter_info travels as each parameter's XHTML <notes> (one <p> per line) and a Burstwise annotation with the unit text", () => {
    const xml = circuitToSbml(ringWithInfo());
    expect(xml).toContain(
      `<parameter id="vA" value="40" units="nM_per_minute" constant="true">\n` +
        `        <notes><body xmlns="http://www.w3.org/1999/xhtml"><p>max. production of A</p><p>from the plate-reader fit, run 3</p></body></notes>\n` +
        `        <annotation><burstwiseParameterInfo xmlns="urn:burstwise:sbml:parameter-info:1" unit="nM/min"/></annotation>\n` +
        `      </parameter>`,
    );
    expect(xml).toContain("<p>half-repression level &lt;K&gt; &amp; &quot;typical&quot; for tetR-like sites</p>");
    // a parameter without parameter_info is written as before
    expect(xml).toMatch(/<parameter id="vB" value="40" units="[^"]+" constant="true"\/>/);
    // without its notes and annotations each parameter is exactly what the plain circuit gives: no number or unit changed
    const plain = load("examples/ring-timer.circuit.json");
    expect(xml.replace(/(<parameter [^>]*)>(?:\n\s*<(?:notes|annotation)>.*)+\n\s*<\/parameter>/g, "$1/>")).toBe(circuitToSbml(plain));
    const back = sbmlToCircuit(xml, { useAnnotations: false }).circuit;
    expect(back.parameter_info).toEqual(ringWithInfo().parameter_info);
    expect(sbmlToCircuit(circuitToSbml(plain)).circuit).not.toHaveProperty("parameter_info");
  });

  it("a parameter note from another tool's SBML becomes parameter_info (paragraphs as lines, capped at 500 characters)", () => {
    const xml = `<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2"><model substanceUnits="item">
      <listOfCompartments><compartment id="c" size="1" spatialDimensions="3" constant="true"/></listOfCompartments>
      <listOfSpecies><species id="X" compartment="c" initialAmount="1" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
      <listOfParameters>
        <parameter id="k" value="2" constant="true"><notes><html xmlns="http://www.w3.org/1999/xhtml"><head><title>k</title></head><body>
          <p>Synthesis rate,
             per cell.</p><p>See <b>Table 2</b>.</p></body></html></notes></parameter>
        <parameter id="g" value="0.1" constant="true"><notes><body xmlns="http://www.w3.org/1999/xhtml"><p>${"x".repeat(600)}</p></body></notes></parameter>
        <parameter id="unused" value="3" constant="true"><notes><body xmlns="http://www.w3.org/1999/xhtml"><p>kept even where no rate uses it</p></body></notes></parameter>
      </listOfParameters>
      <listOfReactions>
        <reaction id="make" reversible="false"><listOfProducts><speciesReference species="X" stoichiometry="1" constant="true"/></listOfProducts>
          <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><ci>k</ci></math></kineticLaw></reaction>
        <reaction id="lose" reversible="false"><listOfReactants><speciesReference species="X" stoichiometry="1" constant="true"/></listOfReactants>
          <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><apply><times/><ci>g</ci><ci>X</ci></apply></math></kineticLaw></reaction>
      </listOfReactions></model></sbml>`;
    const c = parseCircuit(sbmlToCircuit(xml).circuit);
    expect(c.parameter_info).toEqual({
      k: { note: "Synthesis rate, per cell.\nSee Table 2 ." },
      g: { note: "x".repeat(500) },
      unused: { note: "kept even where no rate uses it" },
    });
  });

  it("an edited kinetic law wins over a stale annotation", () => {
    const c = load("examples/birth-death.circuit.json");
    const xml = circuitToSbml(c).replace("<ci> g </ci><ci> X </ci>", "<ci> g </ci><ci> X </ci><cn> 2 </cn>");
    const back = sbmlToCircuit(xml);
    expect(back.circuit.reactions[1].rate).toEqual({ law: "expression", expression: "g * X * 2" });
    expect(back.warnings.map((w) => `${w.code}: ${w.message}`).join(" ")).toMatch(/sbml-annotation-differs: .*lose_X.*annotation differs/);
  });

  it("circuitToSbml writes Level 3 Version 2 with units, one compartment of volume_fL and MathML for Hill laws", () => {
    const xml = circuitToSbml(load("examples/ring-timer-10fL.circuit.json"));
    expect(xml).toContain(`<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">`);
    expect(xml).toMatch(/<compartment id="cell" spatialDimensions="3" size="10" units="femtolitre" constant="true"\/>/);
    expect(xml).toContain(`<unit kind="mole" exponent="1" scale="-24" multiplier="1"/>`);
    expect(xml).toContain(`<unit kind="second" exponent="1" scale="0" multiplier="60"/>`);
    expect(xml).toContain("<apply><power/><apply><divide/><ci> C </ci><ci> K </ci></apply><ci> n </ci></apply>");
    expect(isSbmlText(xml)).toBe(true);
    expect(isSbmlText("  {\"format\": 1}")).toBe(false);
  });
});

// libSBML's own consistency checks (including units), when its Perl binding is installed
// (Debian: apt-get install libsbml5-perl). Skipped elsewhere; see ssa/README.md for the last run.
const LIBSBML_CHECK = `use LibSBML; my $doc = LibSBML::readSBMLFromFile($ARGV[0]);
$doc->setConsistencyChecks($LibSBML::LIBSBML_CAT_UNITS_CONSISTENCY, 1); $doc->checkConsistency();
for (my $i = 0; $i < $doc->getNumErrors(); $i++) { my $e = $doc->getError($i);
  print $e->getSeverityAsString(), " ", $e->getErrorId(), ": ", (split /\n/, $e->getMessage())[0], "\n"; }`;
// Under `npm test` the binding is installed by scripts/test.mjs, so the check must run there.
const hasLibsbml = spawnSync("perl", ["-MLibSBML", "-e", "1"]).status === 0 || process.env.BURSTWISE_REQUIRE_LIBSBML === "1";

describe("SBML export passes libSBML's consistency checks", () => {
  it.skipIf(!hasLibsbml)("circuitToSbml(every shipped example) has no libSBML error or warning, unit checks included", () => {
    const dir = mkdtempSync(join(tmpdir(), "bw-sbml-"));
    // Circuits with a schedule are refused by the export (next test) until it writes SBML events.
    for (const f of readdirSync("examples").filter((x) => x.endsWith(".circuit.json") && !load(`examples/${x}`).schedule)) {
      const file = join(dir, f.replace(".json", ".xml"));
      writeFileSync(file, circuitToSbml(load(`examples/${f}`)));
      const r = spawnSync("perl", ["-e", LIBSBML_CHECK, file], { encoding: "utf8" });
      expect(r.status).toBe(0);
      expect(`${f}: ${r.stdout}`).toBe(`${f}: `);
    }
  });

  it.skipIf(!hasLibsbml)("circuitToSbml(ring timer with parameter_info: notes and unit annotations) has no libSBML error or warning", () => {
    const file = join(mkdtempSync(join(tmpdir(), "bw-sbml-")), "ring-info.xml");
    writeFileSync(file, circuitToSbml(ringWithInfo()));
    const r = spawnSync("perl", ["-e", LIBSBML_CHECK, file], { encoding: "utf8" });
    expect(r.status).toBe(0);
    expect(r.stdout).toBe("");
  });

  it.skipIf(!hasLibsbml)("circuitToSbml(a circuit with free formulas) has no libSBML error (unit warnings from the formula itself are allowed)", () => {
    const dir = mkdtempSync(join(tmpdir(), "bw-sbml-"));
    for (const [i, c] of extraCircuits.entries()) {
      const file = join(dir, `extra-${i}.xml`);
      writeFileSync(file, circuitToSbml(c));
      const r = spawnSync("perl", ["-e", LIBSBML_CHECK, file], { encoding: "utf8" });
      expect(r.stdout.split("\n").filter((l) => /^(Error|Fatal)/.test(l))).toEqual([]);
    }
  });
});

describe("SBML import of hand-written files", () => {
  it("sbmlToCircuit(Level 2 enzyme file) maps amounts, concentrations, locals, rules and functions as SBML says (worked by hand)", () => {
    const { circuit, warnings, level, version } = sbmlToCircuit(fixture("sbml-l2v4-enzyme.xml"));
    expect([level, version]).toEqual([2, 4]);
    const c = parseCircuit(circuit);
    // substance redefined as item: molecules; time keeps the Level 2 default, second (SBML L2V4 §4.4.3).
    expect(c.units).toEqual({ time: "s", amount: "molecules" });
    expect(warnings.map((w) => w.code)).not.toContain("sbml-no-time-unit");
    expect(warnings.map((w) => w.code)).not.toContain("sbml-no-substance-unit");
    // Initial counts: S is 10 per unit volume in a compartment of size 2 → 20; E is an amount.
    expect(Object.fromEntries(c.species.map((s) => [s.id, s.initial]))).toEqual({ S: 20, E: 4, ES: 0, P: 1 });
    // The boundary species Src is not simulated; the reversible "bind" became two reactions.
    expect(c.reactions.map((r) => r.id)).toEqual(["inflow", "bind_fwd", "bind_rev", "convert", "clear_P", "leak_S"]);
    expect(c.reactions[3].products).toEqual({ E: 1, P: 2 });
    // Rates (molecules/s) at x = (S, E, ES, P) = (6, 3, 2, 5), by hand from the SBML formulas:
    // species symbols are amounts for E, ES and x/V for S, P (V = 2); kon = 2·kbase = 0.1,
    // Km = 1.5·Km0 = 6, k_in = 0.2, Src = 3 (a concentration), log2(8) = 3.
    const f = ratesById(c, [6, 3, 2, 5]);
    const V = 2;
    expect(f.inflow).toBeCloseTo(V * 0.2 * 3, 14);
    expect(f.bind_fwd).toBeCloseTo(0.1 * 3 * (6 / V), 14);
    expect(f.bind_rev).toBeCloseTo(0.3 * 2, 14);
    expect(f.convert).toBeCloseTo(1.5 * 2, 14);
    expect(f.clear_P).toBeCloseTo((V * (2 * (5 / V))) / (6 + 5 / V), 14);
    expect(f.leak_S).toBeCloseTo(0.01 * Math.cbrt(6 / V) * 3, 14);
  });

  it("sbmlToCircuit(Level 3 file with nanomole, litre, hour) gives an nM circuit of 1 fL in hours with rates in nM/h (worked by hand)", () => {
    const { circuit, warnings } = sbmlToCircuit(fixture("sbml-l3v1-gene.xml"));
    const c = parseCircuit(circuit);
    expect(warnings).toEqual([]);
    expect(c.units).toEqual({ time: "h", amount: "nM" });
    expect(c.volume_fL).toBe(1);
    expect(c.description).toBe("A repressed gene and its protein.");
    // X is given as an amount, 2e-15 nmol in 1e-15 L: 2 nM.
    expect(c.species).toEqual([{ id: "R", initial: 5 }, { id: "X", initial: 2 }]);
    const f = ratesById(c, [4, 3]);
    // cell·v·K^h/(K^h + R^h) in nmol/h divided by the volume: v·K²/(K² + R²) nM/h.
    expect(f.express).toBeCloseTo((30 * 100) / (100 + 16), 12);
    // d·X with X an amount (nmol): d·(X_conc·V)/V = d·X_conc.
    expect(f.decay).toBeCloseTo(0.7 * 3, 12);
    // A bare "leak" (3e-15 nmol/h, no compartment factor) is leak/V = 3 nM/h.
    expect(f.make_R).toBeCloseTo(3, 12);
  });

  it("sbmlToCircuit(Level 2 file with RDF, SBO terms, XHTML notes, redefined substance/volume/time) gives a µM circuit in minutes", () => {
    const { circuit, warnings } = sbmlToCircuit(fixture("sbml-l2v3-annotated.xml"));
    const c = parseCircuit(circuit);
    // substance = µmol, volume = L, so concentrations are µM; time = 60 s; size 2e-15 L = 2 fL.
    expect(c.units).toEqual({ time: "min", amount: "uM" });
    expect(c.volume_fL).toBe(2);
    expect(c.description).toBe("Negative autoregulation.\n\nProtein P represses its own gene.");
    expect(c.species).toEqual([{ id: "P", name: "repressor", initial: 0.01 }]);
    expect(warnings).toEqual([{ code: "sbml-fast-ignored", message: 'reaction "synthesis" is marked fast; simulated at its kinetic law\'s rate like the others' }]);
    const f = ratesById(c, [0.03]);
    expect(f.synthesis).toBeCloseTo((0.05 * 0.02) / (0.02 + 0.03), 15); // nucleus·β·K/(K+P) over the volume
    expect(f.degradation).toBeCloseTo(0.1 * 0.03, 15);
  });

  it("sbmlToCircuit reads a substance unit of item as molecules and converts minutes", () => {
    const xml = `<?xml version="1.0"?>
<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
  <model id="bd" substanceUnits="item" timeUnits="per_min_time" extentUnits="item">
    <listOfUnitDefinitions><unitDefinition id="per_min_time"><listOfUnits><unit kind="second" exponent="1" scale="0" multiplier="60"/></listOfUnits></unitDefinition></listOfUnitDefinitions>
    <listOfCompartments><compartment id="c" spatialDimensions="3" size="1" constant="true"/></listOfCompartments>
    <listOfSpecies><species id="X" compartment="c" initialAmount="3" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
    <listOfReactions>
      <reaction id="make" reversible="false"><listOfProducts><speciesReference species="X" stoichiometry="1" constant="true"/></listOfProducts>
        <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><ci> k </ci></math>
          <listOfLocalParameters><localParameter id="k" value="10"/></listOfLocalParameters></kineticLaw></reaction>
      <reaction id="lose" reversible="false"><listOfReactants><speciesReference species="X" stoichiometry="1" constant="true"/></listOfReactants>
        <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><apply><times/><ci> k </ci><ci> X </ci></apply></math>
          <listOfLocalParameters><localParameter id="k" value="0.1"/></listOfLocalParameters></kineticLaw></reaction>
    </listOfReactions>
  </model>
</sbml>`;
    const c = parseCircuit(sbmlToCircuit(xml).circuit);
    expect(c.units).toEqual({ time: "min", amount: "molecules" });
    expect(c.parameters).toEqual({ make_k: 10, lose_k: 0.1 });
    expect(ratesById(c, [50])).toEqual({ make: 10, lose: 5 });
  });

  it("sbmlToCircuit renames ids that would be misread in formulas (e.g. a species called true)", () => {
    const xml = `<sbml level="3" version="2"><model><listOfCompartments><compartment id="c" size="1" spatialDimensions="3" constant="true"/></listOfCompartments>
      <listOfSpecies><species id="true" compartment="c" initialAmount="1" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
      <listOfReactions><reaction id="r" reversible="false"><listOfReactants><speciesReference species="true" stoichiometry="1" constant="true"/></listOfReactants>
      <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><apply><times/><cn>2</cn><ci>true</ci></apply></math></kineticLaw></reaction></listOfReactions></model></sbml>`;
    const { circuit, warnings } = sbmlToCircuit(xml);
    const c = parseCircuit(circuit);
    expect(c.species[0].id).toBe("true_");
    expect(c.reactions[0].reactants).toEqual({ true_: 1 });
    expect(warnings).toContainEqual({ code: "sbml-id-renamed", message: 'id "true" renamed "true_" (reserved in formulas)' });
    expect(ratesById(c, [4])).toEqual({ r: 8 });
  });
});

describe("SBML errors name the element", () => {
  const wrap = (reactionsXml: string, extra = "") => `<?xml version="1.0"?>
<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
  <model id="m">${extra}
    <listOfCompartments><compartment id="c" spatialDimensions="3" size="1" constant="true"/></listOfCompartments>
    <listOfSpecies><species id="A" compartment="c" initialAmount="5" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
    <listOfParameters><parameter id="k" value="1" constant="true"/></listOfParameters>
    <listOfReactions>${reactionsXml}</listOfReactions>
  </model>
</sbml>`;
  const reaction = (id: string, math: string, stoich = "1") =>
    `<reaction id="${id}" reversible="false"><listOfReactants><speciesReference species="A" stoichiometry="${stoich}" constant="true"/></listOfReactants>
     <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML">${math}</math></kineticLaw></reaction>`;

  const cases: [string, string, RegExp][] = [
    ["an unknown symbol", wrap(reaction("r3", "<apply><times/><ci> Kc </ci><ci> A </ci></apply>")), /^sbml: reaction "r3" kineticLaw: unknown symbol "Kc"$/],
    ["a relation as the whole rate", wrap(reaction("r1", "<apply><gt/><ci>A</ci><cn>1</cn></apply>")), /^sbml: reaction "r1" kineticLaw: a condition \(A > 1\) cannot be a number here; use <piecewise>/],
    ["a piece whose condition is a number", wrap(reaction("r1", "<piecewise><piece><ci>k</ci><ci>A</ci></piece><otherwise><cn>0</cn></otherwise></piecewise>")), /^sbml: reaction "r1" kineticLaw: <piece> 1's condition needs a condition/],
    ["a condition used as a number", wrap(reaction("r1", "<apply><times/><ci>k</ci><apply><lt/><ci>A</ci><cn>1</cn></apply></apply>")), /^sbml: reaction "r1" kineticLaw: <times> needs a number, found the condition A < 1/],
    ["a trigonometric function", wrap(reaction("r1", "<apply><sin/><ci>A</ci></apply>")), /^sbml: reaction "r1" kineticLaw: MathML operator <sin> is not supported in a rate formula$/],
    ["a non-integer stoichiometry", wrap(reaction("r1", "<ci>k</ci>", "1.5")), /^sbml: reaction "r1": stoichiometry of "A" must be a positive integer \(got 1.5\)$/],
    ["a bad number", wrap(reaction("r1", "<cn>1.2.3</cn>")), /^sbml: reaction "r1" kineticLaw: <cn> holds "1.2.3", not a number$/],
    ["an event", wrap(reaction("r1", "<ci>k</ci>"), `<listOfEvents><event id="pulse" useValuesFromTriggerTime="true"/></listOfEvents>`), /^sbml: event "pulse": events are not supported$/],
    ["a rate rule", wrap(reaction("r1", "<ci>k</ci>"), `<listOfRules><rateRule variable="k"><math xmlns="http://www.w3.org/1998/Math/MathML"><cn>1</cn></math></rateRule></listOfRules>`), /^sbml: rateRule for "k": rate rules are not supported$/],
    ["a missing kinetic law", wrap(`<reaction id="r9" reversible="false"><listOfReactants><speciesReference species="A" stoichiometry="1" constant="true"/></listOfReactants></reaction>`), /^sbml: reaction "r9": <kineticLaw> is missing$/],
    ["an unknown species in a reaction", wrap(`<reaction id="r2" reversible="false"><listOfProducts><speciesReference species="B" stoichiometry="1" constant="true"/></listOfProducts><kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><ci>k</ci></math></kineticLaw></reaction>`), /^sbml: reaction "r2": unknown species "B" in listOfProducts$/],
    ["malformed XML", "<sbml level='3' version='2'><model></sbml>", /^sbml: not well-formed XML \(line 1, column \d+\)/],
    ["Level 1", `<sbml level="1" version="2"><model/></sbml>`, /^sbml: only Level 2 and Level 3 are supported \(this file is Level 1\)$/],
    ["a non-SBML document", `<html><body/></html>`, /^sbml: the root element is <html>, not <sbml>$/],
    ["an entity declaration", `<?xml version="1.0"?><!DOCTYPE sbml [<!ENTITY x "xxxxxxxx">]><sbml level="3" version="2"/>`, /^sbml: line 1: <!DOCTYPE> declarations are not allowed \(SBML needs no DOCTYPE or entity declarations\)$/],
  ];
  for (const [what, xml, message] of cases) {
    it(`sbmlToCircuit rejects ${what} with a message naming the element`, () => {
      expect(() => sbmlToCircuit(xml)).toThrow(message);
    });
  }

  it("a formula text that looks like code stays data: an injected <ci> is rejected as an identifier", () => {
    const xml = wrap(reaction("r1", "<ci>process.exit(1)</ci>"));
    expect(() => sbmlToCircuit(xml)).toThrow(/<ci> "process.exit\(1\)" is not a valid identifier/);
  });
});

describe("SBML export of a circuit with a schedule", () => {
  it("is refused with one line naming the schedule (a file without events would silently lose it)", () => {
    expect(() => circuitToSbml(load("examples/two-stage-reporter-induction.circuit.json"))).toThrow(/^schedule: SBML export of a schedule is not available yet/);
  });
});
