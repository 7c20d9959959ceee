import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { compileDirectKernel, directKernelGeneric, directKernelSource } from "@/ssa/kernel";
import { AVOGADRO, binomialCount, compileModel, countsTable, hillActivation, hillRepression, omegaFor, powNonNeg, roundToCount } from "@/ssa/model";
import type { Circuit } from "@/ssa/types";

const ring = (volumeFL = 1): Circuit =>
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "min", amount: "nM" },
    volume_fL: volumeFL,
    species: [{ id: "A", initial: 10 }, { id: "B", initial: 0 }, { id: "C", initial: 0 }],
    parameters: { vA: 40, vB: 40, vC: 40, K: 20, n: 4, g: 0.2 },
    reactions: [
      { id: "make_A", products: { A: 1 }, rate: { law: "hill_repression", input: "C", vmax: "vA", K: "K", n: "n" } },
      { id: "make_B", products: { B: 1 }, rate: { law: "hill_activation", input: "A", vmax: "vB", K: "K", n: "n" } },
      { id: "make_C", products: { C: 1 }, rate: { law: "hill_activation", input: "B", vmax: "vC", K: "K", n: "n", basal: 1 } },
      { id: "lose_A", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
      { id: "lose_B", reactants: { B: 1 }, rate: { law: "mass_action", k: "g" } },
      { id: "lose_C", reactants: { C: 1 }, rate: { law: "mass_action", k: "g" } },
    ],
  });

const dimer = (): Circuit =>
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "s", amount: "nM" },
    volume_fL: 1,
    species: [{ id: "M", initial: 100 }, { id: "D", initial: 0 }, { id: "E", initial: 3 }],
    parameters: { kd: 0.01, kb: 0.002, k0: 5 },
    reactions: [
      { id: "dimerise", reactants: { M: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: "kd" } },
      { id: "bind", reactants: { M: 1, E: 1 }, products: { D: 1 }, rate: { law: "mass_action", k: "kb" } },
      { id: "make", products: { M: 1 }, rate: { law: "mass_action", k: "k0" } },
      { id: "formula", products: { E: 1 }, rate: { law: "expression", expression: "k0 * M / (10 + M) + sqrt(D)" } },
    ],
  });

describe("units and molecule counts", () => {
  it("omegaFor('nM', 1) is 0.602214 molecules per nM (SI Avogadro number, SCIENCE.md)", () => {
    expect(AVOGADRO).toBe(6.02214076e23); // exact since the 2019 SI
    expect(omegaFor("nM", 1)).toBeCloseTo(0.602214076, 12);
    expect(omegaFor("uM", 1)).toBeCloseTo(602.214076, 9);
    expect(omegaFor("nM", 40)).toBeCloseTo(24.08856304, 9);
    expect(omegaFor("molecules", undefined)).toBe(1);
  });

  it("roundToCount rounds to the nearest integer, halves up, and never below 0", () => {
    expect([0, 0.49, 0.5, 1.5, 2.4999, 6.02214076, -3].map(roundToCount)).toEqual([0, 0, 1, 2, 2, 6, 0]);
  });

  it("compileModel converts initial amounts by rounding Ω·amount (10 nM in 1 fL is 6 molecules)", () => {
    const m = compileModel(ring());
    expect(Array.from(m.initialAmounts)).toEqual([10, 0, 0]);
    expect(Array.from(m.initialCounts)).toEqual([6, 0, 0]);
  });

  it("a second-order mass-action constant divides by Ω and a zero-order one multiplies (Gillespie 1977)", () => {
    const m = compileModel(dimer());
    const omega = 0.602214076;
    // bind: c = k/Ω; dimerise: c = k·2!/Ω; make: c = k·Ω
    expect(m.c[1]).toBeCloseTo(0.002 / omega, 14);
    expect(m.c[0]).toBeCloseTo((0.01 * 2) / omega, 14);
    expect(m.c[2]).toBeCloseTo(5 * omega, 14);
    expect(Array.from(m.reactantOrder)).toEqual([2, 2, 0, 0]);
  });

  it("a dimerisation's propensity uses x(x−1): a = (k/Ω)·x(x−1), zero at one molecule", () => {
    const m = compileModel(dimer());
    const omega = 0.602214076;
    const a = new Float64Array(4);
    m.propensities(Float64Array.from([7, 0, 2]), a);
    expect(a[0]).toBeCloseTo((0.01 / omega) * 7 * 6, 12); // c·C(7,2) = (2k/Ω)·21
    expect(a[1]).toBeCloseTo((0.002 / omega) * 7 * 2, 12);
    m.propensities(Float64Array.from([1, 0, 0]), a);
    expect(a[0]).toBe(0);
    expect(a[1]).toBe(0);
    expect(binomialCount(5, 3)).toBe(10);
  });

  it("a formula propensity is Ω·f(x/Ω) and the deterministic rate is f(y)", () => {
    const m = compileModel(dimer());
    const omega = 0.602214076;
    const x = Float64Array.from([30, 4, 0]);
    const a = new Float64Array(4);
    m.propensities(x, a);
    const y = Float64Array.from([30 / omega, 4 / omega, 0]);
    const f = 5 * (y[0] / (10 + y[0])) + Math.sqrt(y[1]);
    expect(a[3]).toBeCloseTo(omega * f, 12);
    const r = new Float64Array(4);
    m.rates(y, r);
    expect(r[3]).toBeCloseTo(f, 12);
    expect(r[0]).toBeCloseTo(0.01 * y[0] * y[0], 10); // k·[M]² (CONTRACT.md)
  });

  it("Hill propensities are Ω·(basal + vmax·h(x/Ω)) with h⁺ + h⁻ = 1 (Hill 1910)", () => {
    const m = compileModel(ring(10));
    const omega = 6.02214076;
    const x = Float64Array.from([50, 130, 400]);
    const a = new Float64Array(6);
    m.propensities(x, a);
    const h = (v: number) => (v / omega) ** 4 / (20 ** 4 + (v / omega) ** 4);
    expect(a[0]).toBeCloseTo(omega * 40 * (1 - h(400)), 10);
    expect(a[1]).toBeCloseTo(omega * 40 * h(50), 10);
    expect(a[2]).toBeCloseTo(omega * (1 + 40 * h(130)), 10);
    expect(a[3]).toBeCloseTo(0.2 * 50, 12);
    expect(hillActivation(3, 2, 5) + hillRepression(3, 2, 5)).toBeCloseTo(1, 15);
    expect(hillActivation(1e200, 1, 8)).toBe(1); // ratio form does not overflow to NaN
    expect(powNonNeg(1.5, 4)).toBe(1.5 * 1.5 * 1.5 * 1.5);
  });

  it("overrides replace parameters and are checked", () => {
    const m = compileModel(ring(), { g: 0.5 });
    expect(m.k[3]).toBe(0.5);
    expect(() => compileModel(ring(), { Kc: 1 })).toThrow('overrides.Kc: unknown parameter "Kc"');
    expect(() => compileModel(ring(), { n: -1 })).toThrow("reactions[0].rate.n: must be > 0");
  });

  it("the dependency graph lists exactly the reactions that read a changed species (Cao, Li & Petzold 2004)", () => {
    const m = compileModel(ring());
    const deps = (r: number) => Array.from(m.depIdx.subarray(m.depPtr[r], m.depPtr[r + 1]));
    expect(deps(0)).toEqual([1, 3]); // make_A changes A: make_B and lose_A read A
    expect(deps(5)).toEqual([0, 5]); // lose_C changes C: make_A and lose_C read C
  });

  it("countsTable lists Ω and every converted constant with units", () => {
    const t = countsTable(dimer());
    expect(t.omega).toBeCloseTo(0.602214076, 12);
    expect(t.omegaUnit).toBe("molecules per nM");
    const bind = t.constants.find((k) => k.reaction === "bind");
    expect(bind).toMatchObject({ name: "k", parameter: "kb", value: 0.002, unit: "1/(nM·s)", moleculesUnit: "1/(molecule·s)" });
    expect(bind?.molecules).toBeCloseTo(0.002 / 0.602214076, 14);
    expect(t.species.map((s) => s.count)).toEqual([60, 0, 2]);
    const hill = countsTable(ring()).constants.filter((k) => k.reaction === "make_A");
    expect(hill.map((k) => k.name)).toEqual(["vmax", "K", "n"]);
    expect(hill[1]?.molecules).toBeCloseTo(20 * 0.602214076, 12);
  });
});

describe("generated kernel", () => {
  it("directKernelSource(m) contains only indices, numbers and our own names, never user text", () => {
    const c = dimer();
    const src = directKernelSource(compileModel(c));
    for (const word of ["dimerise", "bind", "formula", "kd", "kb", "k0", '"M"', "sqrt(D"]) expect(src).not.toContain(word);
    const identifiers = new Set(src.match(/[A-Za-z_$][A-Za-z0-9_$]*/g));
    const allowed = /^(x\d+|a\d+|s\d+|T\d+|TN\d+|H\d+|ra|rb|rc|rd|ru|rt|q|ex|ew|ee|eh|eb|er|P2|LT|clz32|ru|rt|q|ex|ew|ee|eh|eb|er|P2|LT|clz32|r|t|g|tg|tB|o|B|x|rs|grid|nGrid|out|maxEvents|events|asum|T|H|P|Math|log|sqrt|exp|pow|min|max|Infinity|NaN|length|use|strict|return|function|directKernel|let|const|for|while|if|else|e\d*)$/;
    for (const id of identifiers) expect(id).toMatch(allowed);
  });

  it("the generated and the generic direct method follow the same path for the same stream", () => {
    for (const c of [ring(), dimer()]) {
      const m = compileModel(c);
      const nT = 51;
      const grid = new Float64Array(nT + 1);
      for (let g = 0; g < nT; g++) grid[g] = g * 2;
      grid[nT] = Infinity;
      const run = (k: ReturnType<typeof compileDirectKernel>) => {
        const out = new Float64Array(nT * m.nSpecies);
        const rs = Int32Array.from([12345, -6789, 1, 99]);
        const x = m.initialCounts.slice();
        const ev = k(x, rs, grid, nT, out, 0, 1, 1e9);
        return { ev, out: Array.from(out), rs: Array.from(rs) };
      };
      const a = run(compileDirectKernel(m));
      const b = run(directKernelGeneric(m));
      expect(a.ev).toBeGreaterThan(100);
      expect(a).toEqual(b);
    }
  });
});
