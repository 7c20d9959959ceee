/**
 * SBML units by the specification (issue 12 item 7): a Level 2 file that declares no units is in
 * mole, litre and second (SBML L2V4 §4.4.3, Table 4 "built-in units"), so its concentrations are
 * mol/L and its amounts mol; a Level 3 file has no defaults, so undeclared amounts stay molecules
 * and the import says so with the warning `sbml-no-substance-unit`.
 */
import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { compileModel } from "@/ssa/model";
import { AVOGADRO } from "@/ssa/model-core";
import { sbmlToCircuit } from "@/ssa/sbml";
import { simulate } from "@/ssa/simulate";

const MATHML = 'xmlns="http://www.w3.org/1998/Math/MathML"';

/**
 * A hand-written Level 2 Version 4 model with no unit definitions: one compartment of 1e-15 L
 * (1 fL); A given as a concentration of 1 µM (1e-6 mol/L), B as an amount of 2e-21 mol, C absent.
 * Laws: A + B → C at cell·kon·A·B with kon = 1e6 M⁻¹s⁻¹; C → A + B at cell·koff·C with
 * koff = 0.1 s⁻¹; ∅ → A at cell·v with v = 1e-9 M/s.
 */
const LEVEL2_NO_UNITS = `<?xml version="1.0" encoding="UTF-8"?>
<sbml xmlns="http://www.sbml.org/sbml/level2/version4" level="2" version="4">
  <model id="binding_l2">
    <listOfCompartments><compartment id="cell" size="1e-15"/></listOfCompartments>
    <listOfSpecies>
      <species id="A" compartment="cell" initialConcentration="1e-6"/>
      <species id="B" compartment="cell" initialAmount="2e-21" hasOnlySubstanceUnits="true" substanceUnits="substance"/>
      <species id="C" compartment="cell" initialConcentration="0"/>
    </listOfSpecies>
    <listOfParameters>
      <parameter id="kon" value="1e6"/>
      <parameter id="koff" value="0.1"/>
      <parameter id="v" value="1e-9"/>
    </listOfParameters>
    <listOfReactions>
      <reaction id="bind" reversible="false">
        <listOfReactants><speciesReference species="A"/><speciesReference species="B"/></listOfReactants>
        <listOfProducts><speciesReference species="C"/></listOfProducts>
        <kineticLaw><math ${MATHML}><apply><times/><ci>cell</ci><ci>kon</ci><ci>A</ci><apply><divide/><ci>B</ci><ci>cell</ci></apply></apply></math></kineticLaw>
      </reaction>
      <reaction id="unbind" reversible="false">
        <listOfReactants><speciesReference species="C"/></listOfReactants>
        <listOfProducts><speciesReference species="A"/><speciesReference species="B"/></listOfProducts>
        <kineticLaw><math ${MATHML}><apply><times/><ci>cell</ci><ci>koff</ci><ci>C</ci></apply></math></kineticLaw>
      </reaction>
      <reaction id="make_A" reversible="false">
        <listOfProducts><speciesReference species="A"/></listOfProducts>
        <kineticLaw><math ${MATHML}><apply><times/><ci>cell</ci><ci>v</ci></apply></math></kineticLaw>
      </reaction>
    </listOfReactions>
  </model>
</sbml>`;

/** The same network as Level 3 Version 2 with no units anywhere: amounts are molecules, with a warning. */
const LEVEL3_NO_UNITS = `<?xml version="1.0" encoding="UTF-8"?>
<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
  <model id="binding_l3">
    <listOfCompartments><compartment id="cell" spatialDimensions="3" size="1" constant="true"/></listOfCompartments>
    <listOfSpecies>
      <species id="A" compartment="cell" initialAmount="30" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/>
      <species id="C" compartment="cell" initialAmount="0" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/>
    </listOfSpecies>
    <listOfParameters><parameter id="k" value="0.5" constant="true"/></listOfParameters>
    <listOfReactions>
      <reaction id="convert" reversible="false">
        <listOfReactants><speciesReference species="A" stoichiometry="1" constant="true"/></listOfReactants>
        <listOfProducts><speciesReference species="C" stoichiometry="1" constant="true"/></listOfProducts>
        <kineticLaw><math ${MATHML}><apply><times/><ci>k</ci><ci>A</ci></apply></math></kineticLaw>
      </reaction>
    </listOfReactions>
  </model>
</sbml>`;

/** Propensities (molecules per second) at counts x, by reaction id. */
function propensitiesById(c: ReturnType<typeof parseCircuit>, x: number[]): Record<string, number> {
  const m = compileModel(c);
  const out = new Float64Array(m.nReactions);
  m.propensities(Float64Array.from(x), out);
  return Object.fromEntries(m.reactionIds.map((id, j) => [id, out[j]]));
}

describe("SBML Level 2 without unit definitions: mole, litre, second (SBML L2V4 §4.4.3)", () => {
  const imported = sbmlToCircuit(LEVEL2_NO_UNITS);
  const c = parseCircuit(imported.circuit);

  it("reads concentrations in mol/L and amounts in mol: a µM circuit of 1 fL, in seconds, with no unit warning", () => {
    expect(c.units).toEqual({ time: "s", amount: "uM" });
    expect(c.volume_fL).toBe(1);
    // A: 1e-6 mol/L = 1 µM. B: 2e-21 mol in 1e-15 L = 2e-6 mol/L = 2 µM. C: 0.
    const initial = Object.fromEntries(c.species.map((s) => [s.id, s.initial]));
    expect(initial.A).toBeCloseTo(1, 12);
    expect(initial.B).toBeCloseTo(2, 12);
    expect(initial.C).toBe(0);
    expect(imported.warnings).toEqual([]);
  });

  it("gives the molecule counts worked out by hand: 1 µM in 1 fL is 602 molecules", () => {
    const m = compileModel(c);
    // Ω = V·N_A·1e-6 = 1e-15 L · 6.02214076e23 /mol · 1e-6 = 602.214076 molecules per µM.
    expect(m.omega).toBeCloseTo(602.214076, 9);
    // A: 1 µM → round(602.2) = 602. B: 2e-21 mol · N_A = 1204.43 → 1204. C: 0.
    expect(Array.from(m.initialCounts)).toEqual([602, 1204, 0]);
  });

  it("converts M⁻¹s⁻¹, s⁻¹ and M/s constants to the textbook propensities (Gillespie 1977, eq. 10)", () => {
    const V = 1e-15;
    const x = [500, 900, 40]; // A, B, C molecules
    const a = propensitiesById(c, x);
    // Bimolecular: c = kon/(N_A·V) per pair; first order: koff per molecule; zeroth: v·N_A·V per second.
    expect(a.bind / ((1e6 / (AVOGADRO * V)) * 500 * 900)).toBeCloseTo(1, 12);
    expect(a.unbind / (0.1 * 40)).toBeCloseTo(1, 12);
    expect(a.make_A / (1e-9 * AVOGADRO * V)).toBeCloseTo(1, 12);
  });

  it("simulates to something other than zeros: C forms from the 602 A and 1204 B molecules", () => {
    const r = simulate(compileModel(c), { method: "ssa", tEnd: 10, dt: 1, runs: 20, seed: 7 });
    expect(r.mean.A[0]).toBe(602);
    expect(r.mean.B[0]).toBe(1204);
    // Binding starts at kon/(N_A V)·602·1204 ≈ 1200 /s against unbinding at 0.1 /s per C: C ends in the hundreds.
    expect(r.final.C.mean).toBeGreaterThan(100);
    // C is still forming at t = 10 s, so the stationarity check rightly warns; nothing else may.
    expect(r.warnings.map((w) => w.code).filter((code) => code !== "not-stationary" && code !== "window-too-short")).toEqual([]);
  });

  it("a file with a size of 1 (read as 1 litre) imports with the warning sbml-volume-large on volume_fL", () => {
    const big = sbmlToCircuit(LEVEL2_NO_UNITS.replace('size="1e-15"', 'size="1"'));
    expect(big.circuit.volume_fL).toBe(1e15);
    expect(big.warnings).toHaveLength(1);
    expect(big.warnings[0]).toMatchObject({ code: "sbml-volume-large", field: "volume_fL" });
    expect(big.warnings[0]?.message).toMatch(/1 L, so 1 nM is 6\.02e\+14 molecules/);
  });
});

describe("SBML Level 3 without units: molecules, with a warning", () => {
  it("reads amounts as molecules and warns sbml-no-substance-unit (and sbml-no-time-unit)", () => {
    const imported = sbmlToCircuit(LEVEL3_NO_UNITS);
    const c = parseCircuit(imported.circuit);
    expect(c.units).toEqual({ time: "s", amount: "molecules" });
    expect(c.species).toEqual([{ id: "A", initial: 30 }, { id: "C", initial: 0 }]);
    expect(imported.warnings).toEqual([
      { code: "sbml-no-time-unit", message: "no time unit declared; read as seconds", field: "units.time" },
      { code: "sbml-no-substance-unit", message: "no substance unit declared; amounts read as molecules", field: "units.amount" },
    ]);
    expect(propensitiesById(c, [30, 0])).toEqual({ convert: 15 });
  });
});
