/**
 * The generated tau-leaping kernel against the generic one (same algorithm, same stream), the
 * table-based Poisson sampler against simple-statistics' Poisson probabilities, and the ε option.
 */
import { readFileSync } from "node:fs";

import { chiSquaredDistributionTable, poissonDistribution } from "simple-statistics";
import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateCells, simulateEnsemble } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import type { Model } from "@/ssa/model-core";
import { POISSON_TABLE_MAX, poisson } from "@/ssa/poisson";
import { CellRng, cellRngState } from "@/ssa/rng";
import { tauKernel } from "@/ssa/tau";
import { compileTauKernel, tauKernelSource } from "@/ssa/tau-kernel";
import type { Circuit } from "@/ssa/types";

// The shipped ring timer at another volume, with a basal rate on make_C so that tables carry it too.
const ring = (volumeFL: number): Circuit => {
  const c = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
  c.reactions[2].rate.basal = 0.5;
  return parseCircuit({ ...c, volume_fL: volumeFL });
};

// Second- and third-order mass action (g_i from the highest order, CGP 2006 eq. 27 ff.) and a formula.
const dimer = (): Circuit =>
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "s", amount: "molecules" },
    species: [{ id: "M", initial: 400 }, { id: "D", initial: 0 }, { id: "E", initial: 30 }],
    parameters: { kd: 0.001, ku: 0.5, kt: 1e-6, kb: 0.0004, k0: 200, ke: 0.1 },
    reactions: [
      { id: "dimerise", reactants: { M: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: "kd" } },
      { id: "split", reactants: { D: 1 }, products: { M: 2 }, rate: { law: "mass_action", k: "ku" } },
      { id: "trimer", reactants: { M: 3 }, products: { D: 1, M: 1 }, rate: { law: "mass_action", k: "kt" } },
      { id: "bind", reactants: { M: 1, E: 1 }, products: { D: 1 }, rate: { law: "mass_action", k: "kb" } },
      { id: "make", products: { M: 1 }, rate: { law: "mass_action", k: "k0" } },
      { id: "feed", products: { E: 1 }, rate: { law: "expression", expression: "k0 * M / (100 + M) + sqrt(D)" } },
      { id: "lose_E", reactants: { E: 1 }, rate: { law: "mass_action", k: "ke" } },
      { id: "lose_D", reactants: { D: 1 }, rate: { law: "mass_action", k: "ke" } },
    ],
  });

// A busy birth–death beside an 8-molecule switch: the switch's reactions are always critical
// (fewer than n_c = 10 firings from exhausting a reactant), so leaps fire them one at a time.
const switched = (): Circuit =>
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "s", amount: "molecules" },
    species: [{ id: "X", initial: 0 }, { id: "Y", initial: 8 }, { id: "Z", initial: 0 }],
    parameters: { k: 2000, g: 1, s: 0.5 },
    reactions: [
      { id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } },
      { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
      { id: "on", reactants: { Y: 1 }, products: { Z: 1 }, rate: { law: "mass_action", k: "s" } },
      { id: "off", reactants: { Z: 1 }, products: { Y: 1 }, rate: { law: "mass_action", k: "s" } },
    ],
  });

function runKernel(m: Model, kernel: ReturnType<typeof tauKernel>, tEnd: number, seed: number) {
  const nT = 101;
  const grid = new Float64Array(nT + 1);
  for (let g = 0; g < nT; g++) grid[g] = (g * tEnd) / (nT - 1);
  grid[nT] = Infinity;
  const out = new Float64Array(nT * m.nSpecies);
  const rs = cellRngState(seed, 0);
  const x = m.initialCounts.slice();
  const events = kernel(x, rs, grid, nT, out, 0, 1, 1e12);
  return { events, out: Array.from(out), rs: Array.from(rs) };
}

describe("generated tau-leaping kernel", () => {
  it("follows the generic kernel's path for the same stream (ring timer at 100 fL, Hill inputs; dimerisation, third order, formula; critical reactions)", () => {
    for (const [c, tEnd, epsilon] of [
      [ring(100), 200, 0.03],
      [ring(100), 200, 0.1], // means of 64 and more: the inline table branch hands the stream to poisson()
      [dimer(), 50, 0.03],
      [switched(), 20, 0.03], // leaps that fire one critical reaction
    ] as const) {
      const m = compileModel(c);
      for (const seed of [1, 2]) {
        const a = runKernel(m, compileTauKernel(m, { epsilon }), tEnd, seed);
        const b = runKernel(m, tauKernel(m, { epsilon }), tEnd, seed);
        expect(a.events).toBeGreaterThan(10_000);
        expect(a).toEqual(b);
      }
    }
  });

  it("tauKernelSource(m) contains only indices, numbers and our own names, never user text", () => {
    const src = tauKernelSource(compileModel(dimer()));
    for (const word of ["dimerise", "trimer", "feed", "kd", "kb", "k0", '"M"', "sqrt(D"]) expect(src).not.toContain(word);
    const identifiers = new Set(src.match(/[A-Za-z_$][A-Za-z0-9_$]*/g));
    const allowed =
      /^(x\d+|y\d+|a\d+|c\d+|f\d+|g\d+|m\d+|mu\d+|sg\d+|J\d+_\d+|s\d+|T\d+|TN\d+|H\d+|G\d+|GF\d+|T|H|G|GF|P|R|POIS|PC|PG|PS|PL|PR|rng|ra|rb|rc|rd|u|s|k|q|dd|x|rs|grid|nGrid|out|o|B|maxEvents|events|t|g|tg|tB|tau|tauPrime|tauCrit|toGrid|fireCritical|asum|acrit|bd|d|jn|row|r|jc|step|tNext|Math|log|sqrt|exp|pow|min|max|abs|floor|Infinity|NaN|length|use|strict|return|function|tauKernel|new|let|const|for|while|do|break|continue|if|else|false|true|e\d*)$/;
    for (const id of identifiers) expect(id).toMatch(allowed);
  });

  it("a larger ε takes fewer leaps and is reported in the summary; ε outside (0, 0.2] is refused", () => {
    const m = compileModel(ring(100));
    const o = { method: "tau" as const, tEnd: 100, dt: 1, seed: 3 };
    const s03 = simulateEnsemble(m, { ...o, tauEpsilon: 0.03 }, 2);
    const s10 = simulateEnsemble(m, { ...o, tauEpsilon: 0.1 }, 2);
    expect(simulateEnsemble(m, o, 1).tau_epsilon).toBe(0.05); // the default
    expect(s03.tau_epsilon).toBe(0.03);
    expect(s10.tau_epsilon).toBe(0.1);
    expect(s10.mean.A).not.toEqual(s03.mean.A);
    expect(simulateEnsemble(m, { ...o, method: "ssa" }, 1).tau_epsilon).toBeUndefined();
    for (const bad of [0, -0.1, 0.5, NaN]) expect(() => simulateCells(m, { ...o, tauEpsilon: bad }, 0, 1)).toThrow(/tauEpsilon must be in \(0, 0.2\]/);
  });
});

describe("Poisson sampler (tables with a guide below 64, PTRS above)", () => {
  // Pearson's χ² over counts with expected frequency ≥ 5 (tails pooled), against the probabilities
  // of simple-statistics' poissonDistribution; critical value at p = 0.005 from its χ² table.
  it.each([0.2, 2.6, 17.3, 40, 63.9, 64, 80])("poisson(rng, %d) matches simple-statistics' Poisson probabilities (χ², p > 0.005)", (lambda) => {
    const n = 200_000;
    const rng = new CellRng(cellRngState(2026, Math.round(lambda * 10)));
    const pmf = poissonDistribution(lambda) as number[];
    const observed = new Float64Array(pmf.length + 1);
    for (let i = 0; i < n; i++) {
      const k = poisson(rng, lambda);
      observed[Math.min(k, pmf.length)]++;
    }
    // Bins: pool from each end until the expected count reaches 5.
    const expected = pmf.map((p) => p * n);
    expected.push(Math.max(0, n - expected.reduce((a, b) => a + b, 0)));
    const bins: [number, number][] = [];
    let e = 0;
    let o = 0;
    for (let k = 0; k < expected.length; k++) {
      e += expected[k] as number;
      o += observed[k] as number;
      if (e >= 5 && n - (bins.reduce((a, [x]) => a + x, 0) + e) >= 5) {
        bins.push([e, o]);
        e = 0;
        o = 0;
      }
    }
    const last = bins[bins.length - 1] as [number, number];
    last[0] += e;
    last[1] += o;
    const chi2 = bins.reduce((a, [ex, ob]) => a + (ob - ex) ** 2 / ex, 0);
    const df = bins.length - 1;
    // The table lists df 1…30, 40, 50, …, 100; the next listed df above ours is the stricter bound's safe side.
    const table = chiSquaredDistributionTable as unknown as Record<string, Record<string, number>>;
    const listed = Object.keys(table).map(Number).sort((x, y) => x - y);
    const critical = table[String(listed.find((d) => d >= df))]?.["0.005"] ?? NaN;
    expect(df).toBeGreaterThan(0);
    expect(chi2).toBeLessThan(critical);
  });

  it("uses the tables exactly below POISSON_TABLE_MAX: one uniform for a multiple of 1/4, two otherwise", () => {
    const a = new CellRng(cellRngState(5, 5));
    const b = new CellRng(cellRngState(5, 5));
    poisson(a, 12.25); // tabulated mean: one uniform
    b.uniform();
    expect(a.uniform()).toBe(b.uniform());
    poisson(a, 12.3); // table + remainder: two uniforms
    b.uniform();
    b.uniform();
    expect(a.uniform()).toBe(b.uniform());
    expect(POISSON_TABLE_MAX).toBe(64);
  });
});
