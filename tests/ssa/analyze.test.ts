import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { analyze, classify, findSteadyState } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";
import { solveOde } from "@/ssa/ode";
import type { Circuit } from "@/ssa/types";

const load = (path: string) => parseCircuit(JSON.parse(readFileSync(path, "utf8")));

/**
 * The Goodwin-form loop of SCIENCE.md in molecule units (Ω = 1), so the circuit's rates are the
 * formula's: dx1/dt = a/(1+x3^n) − x1, dx2/dt = x1 − x2, dx3/dt = x2 − x3 (K = 1, vmax = a).
 */
export function goodwin(a: number, n: number): Circuit {
  return parseCircuit({
    format: "burstwise.circuit/1",
    name: `Goodwin loop a=${a} n=${n}`,
    units: { time: "min", amount: "molecules" },
    species: [{ id: "x1", initial: 0 }, { id: "x2", initial: 0 }, { id: "x3", initial: 0 }],
    parameters: { a, n, K: 1, one: 1 },
    reactions: [
      { id: "make_x1", products: { x1: 1 }, rate: { law: "hill_repression", input: "x3", vmax: "a", K: "K", n: "n" } },
      { id: "lose_x1", reactants: { x1: 1 }, rate: { law: "mass_action", k: "one" } },
      { id: "make_x2", reactants: { x1: 1 }, products: { x1: 1, x2: 1 }, rate: { law: "mass_action", k: "one" } },
      { id: "lose_x2", reactants: { x2: 1 }, rate: { law: "mass_action", k: "one" } },
      { id: "make_x3", reactants: { x2: 1 }, products: { x2: 1, x3: 1 }, rate: { law: "mass_action", k: "one" } },
      { id: "lose_x3", reactants: { x3: 1 }, rate: { law: "mass_action", k: "one" } },
    ],
  });
}

/** Loop gain n·x3^n/(1+x3^n): the product of the stages' logarithmic sensitivities (SCIENCE.md). */
const loopGain = (x3: number, n: number) => (n * x3 ** n) / (1 + x3 ** n);

describe("analyze: Goodwin loop and the secant condition", () => {
  it("analyze(Goodwin a=100, n=10) is oscillatory with loop gain ≈ 9.85 > 8 (SCIENCE.md; Thron 1991)", () => {
    const out = analyze(compileModel(goodwin(100, 10)));
    const x = out.steady_state.x3;
    // Steady state solves x(1 + x^n) = a with x1 = x2 = x3 (worked out from the equations).
    expect(x * (1 + x ** 10)).toBeCloseTo(100, 9);
    expect(out.steady_state.x1).toBeCloseTo(x, 10);
    expect(loopGain(x, 10)).toBeCloseTo(9.85, 2);
    expect(out.oscillatory).toBe(true);
    expect(out.stable).toBe(false);
    expect(out.lna).toBeNull();
  });

  for (const n of [6, 8]) {
    it(`analyze(Goodwin a=100, n=${n}) is stable with loop gain < 8 (SCIENCE.md; Thron 1991)`, () => {
      const out = analyze(compileModel(goodwin(100, n)));
      expect(loopGain(out.steady_state.x3, n)).toBeLessThan(8);
      expect(out.stable).toBe(true);
      expect(out.oscillatory).toBe(false);
      expect(out.lna).not.toBeNull();
    });
  }

  it("analyze(Goodwin a=1, n=20) is stable with loop gain ≈ 2.05 (SCIENCE.md)", () => {
    const out = analyze(compileModel(goodwin(1, 20)));
    expect(loopGain(out.steady_state.x3, 20)).toBeCloseTo(2.05, 2);
    expect(out.stable).toBe(true);
  });

  it("analyze(Goodwin a=100) flips from stable to oscillatory exactly where the loop gain crosses 8 (secant condition, Thron 1991)", () => {
    let flips = 0;
    let previous: boolean | null = null;
    for (let n = 6; n <= 10.001; n += 0.125) {
      const out = analyze(compileModel(goodwin(100, n)));
      const g = loopGain(out.steady_state.x3, n);
      // For N = 3 equal-rate stages sec(π/3)^3 = 8 is exact, not just sufficient.
      expect(out.oscillatory).toBe(g > 8);
      expect(out.stable).toBe(g < 8);
      if (previous !== null && previous !== out.oscillatory) flips++;
      previous = out.oscillatory;
    }
    expect(flips).toBe(1);
  });

  it("analyze(Goodwin) eigenvalues are −1 − g^(1/3) and −1 + g^(1/3)·e^(±iπ/3) (roots of (λ+1)³ + g = 0, worked out here)", () => {
    for (const n of [6, 10]) {
      const out = analyze(compileModel(goodwin(100, n)));
      const c = Math.cbrt(loopGain(out.steady_state.x3, n));
      const ev = out.eigenvalues;
      expect(ev).toHaveLength(3);
      expect(ev[0].re).toBeCloseTo(-1 + c / 2, 9);
      expect(Math.abs(ev[0].im)).toBeCloseTo((c * Math.sqrt(3)) / 2, 9);
      expect(ev[1].re).toBeCloseTo(-1 + c / 2, 9);
      expect(ev[0].im).toBeCloseTo(-ev[1].im, 9);
      expect(ev[2].re).toBeCloseTo(-1 - c, 9);
      expect(ev[2].im).toBe(0);
    }
  });
});

describe("analyze: linear noise approximation", () => {
  it("analyze(two-stage reporter) LNA Fano = 1 + b/(1 + γp/γm) to 1e-9 relative (Thattai & van Oudenaarden 2001; exact for linear networks)", () => {
    const out = analyze(compileModel(load("examples/two-stage-reporter.circuit.json")));
    const km = 2, gm = 0.2, kp = 2, gp = 0.02;
    const b = kp / gm;
    const fano = 1 + b / (1 + gp / gm);
    const mean = (km * kp) / (gm * gp);
    expect(out.stable).toBe(true);
    expect(Math.abs(out.steady_state.P - mean) / mean).toBeLessThan(1e-10);
    expect(Math.abs((out.lna!.fano.P as number) - fano) / fano).toBeLessThan(1e-9);
    // mRNA is a birth–death process: Poisson, Fano 1 (textbook).
    expect(Math.abs((out.lna!.fano.M as number) - 1)).toBeLessThan(1e-9);
    expect(out.lna!.cv.P).toBeCloseTo(Math.sqrt(fano / mean), 10);
    // Covariance is symmetric.
    expect(out.lna!.covariance[0][1]).toBe(out.lna!.covariance[1][0]);
  });

  it("analyze(birth–death) has Fano 1 and CV 1/√(k/γ) (textbook: stationary Poisson)", () => {
    const out = analyze(compileModel(load("examples/birth-death.circuit.json")));
    expect(out.steady_state.X).toBeCloseTo(100, 9);
    expect(Math.abs((out.lna!.fano.X as number) - 1)).toBeLessThan(1e-12);
    expect(out.lna!.cv.X).toBeCloseTo(0.1, 12);
  });

  it("analyze(birth–death in nM) reports the steady state in model units and the LNA in molecules", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "nM" },
      volume_fL: 3,
      species: [{ id: "X", initial: 0 }],
      parameters: { k: 5, g: 0.1 },
      reactions: [
        { id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } },
        { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
      ],
    });
    const model = compileModel(c);
    const out = analyze(model);
    expect(out.steady_state.X).toBeCloseTo(50, 9);
    expect(analyze(model, { units: "molecules" }).steady_state.X).toBeCloseTo(50 * model.omega, 8);
    expect(out.lna!.covariance[0][0]).toBeCloseTo(50 * model.omega, 8); // Poisson: variance = mean (molecules)
  });

  it("analyze(isomerisation A ⇌ B) handles the conservation law: binomial variance N·p·(1−p), Var(A+B) = 0 (textbook)", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "s", amount: "molecules" },
      species: [{ id: "A", initial: 100 }, { id: "B", initial: 0 }],
      parameters: { k1: 2, k2: 3 },
      reactions: [
        { id: "fwd", reactants: { A: 1 }, products: { B: 1 }, rate: { law: "mass_action", k: "k1" } },
        { id: "back", reactants: { B: 1 }, products: { A: 1 }, rate: { law: "mass_action", k: "k2" } },
      ],
    });
    const out = analyze(compileModel(c));
    const p = 2 / 5;
    expect(out.steady_state.B).toBeCloseTo(100 * p, 10);
    expect(out.stable).toBe(true); // the conservation law's zero eigenvalue does not count against stability
    expect(out.eigenvalues.map((e) => e.re).sort((a, b) => a - b)).toEqual([expect.closeTo(-5, 12), 0]);
    const cov = out.lna!.covariance;
    expect(cov[1][1]).toBeCloseTo(100 * p * (1 - p), 10);
    expect(cov[0][0] + 2 * cov[0][1] + cov[1][1]).toBeCloseTo(0, 10);
  });

  it("analyze(ring timer) says oscillatory, and its ODE trace indeed keeps oscillating (cross-check)", () => {
    const model = compileModel(load("examples/ring-timer.circuit.json"));
    const out = analyze(model);
    expect(out.oscillatory).toBe(true);
    expect(out.lna).toBeNull();
    const trace = solveOde(model, { tEnd: 2000, dt: 1 }).trace.A.slice(1500);
    expect(Math.max(...trace) - Math.min(...trace)).toBeGreaterThan(0.5 * out.steady_state.A);
  });

  it("analyze(bistable toggle) reports the stable state the trajectory goes to, not the saddle between (worked by hand)", () => {
    // du/dt = a/(1+v²) − u, dv/dt = a/(1+u²) − v with a = 10: two stable states and a saddle at
    // u = v (u³ + u = 10 gives u = 2). Starting from u = 5, v = 0.1 the high-u state is reached.
    const toggle = (u0: number, v0: number) =>
      parseCircuit({
        format: "burstwise.circuit/1",
        units: { time: "min", amount: "molecules" },
        species: [{ id: "u", initial: u0 }, { id: "v", initial: v0 }],
        parameters: { a: 10, K: 1, n: 2, one: 1 },
        reactions: [
          { id: "make_u", products: { u: 1 }, rate: { law: "hill_repression", input: "v", vmax: "a", K: "K", n: "n" } },
          { id: "make_v", products: { v: 1 }, rate: { law: "hill_repression", input: "u", vmax: "a", K: "K", n: "n" } },
          { id: "lose_u", reactants: { u: 1 }, rate: { law: "mass_action", k: "one" } },
          { id: "lose_v", reactants: { v: 1 }, rate: { law: "mass_action", k: "one" } },
        ],
      });
    const high = analyze(compileModel(toggle(5, 0.1)));
    expect(high.stable).toBe(true);
    expect(high.steady_state.u).toBeGreaterThan(9);
    expect(high.steady_state.u * (1 + high.steady_state.v ** 2)).toBeCloseTo(10, 9);
    const low = analyze(compileModel(toggle(0.1, 5)));
    expect(low.steady_state.v).toBeCloseTo(high.steady_state.u, 9); // mirror image
    // Started exactly on the symmetric line, the trajectory stays there and reaches the saddle.
    const saddle = analyze(compileModel(toggle(0, 0)));
    expect(saddle.steady_state.u).toBeCloseTo(2, 9);
    expect(saddle.stable).toBe(false);
    expect(saddle.oscillatory).toBe(false);
  });

  it("findSteadyState throws a clear error for unbounded growth", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }],
      parameters: { k: 1 },
      reactions: [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }],
    });
    expect(() => findSteadyState(compileModel(c))).toThrow(/no steady state/);
  });

  it("classify() treats a complex pair on the imaginary axis as neither stable nor oscillatory", () => {
    expect(classify([{ re: 0, im: 1 }, { re: 0, im: -1 }])).toEqual({ stable: false, oscillatory: false });
    expect(classify([{ re: 0.1, im: 1 }, { re: 0.1, im: -1 }])).toEqual({ stable: false, oscillatory: true });
    expect(classify([{ re: 0.1, im: 0 }])).toEqual({ stable: false, oscillatory: false });
    expect(classify([{ re: -0.1, im: 2 }, { re: -0.1, im: -2 }])).toEqual({ stable: true, oscillatory: false });
  });
});
