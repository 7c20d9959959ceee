import { readFileSync } from "node:fs";
import { createRequire } from "node:module";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { compileModel } from "@/ssa/model";
import { integrate, outputGrid, solveOde } from "@/ssa/ode";

/**
 * odex (Bulirsch–Stoer), the independent integrator below, loaded as plain JavaScript: it ships
 * its TypeScript source beside the JavaScript, and that source does not compile under our strict
 * settings, so the type check sees only the part we use.
 */
interface OdexSolver {
  absoluteTolerance: number;
  relativeTolerance: number;
  maxSteps: number;
  solve(f: (x: number, y: number[]) => number[], x: number, y0: number[], xEnd: number): { y: number[] };
}
const { Solver } = createRequire(import.meta.url)("odex") as { Solver: new (n: number) => OdexSolver };

const load = (path: string) => parseCircuit(JSON.parse(readFileSync(path, "utf8")));

const decayCircuit = (k: number, x0: number) =>
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "min", amount: "nM" },
    volume_fL: 2,
    species: [{ id: "X", initial: x0 }],
    parameters: { k },
    reactions: [{ id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "k" } }],
  });

// Robertson's chemical kinetics (Robertson 1966), the classic stiff test of Hairer & Wanner,
// Solving ODEs II, §IV.1 and §IV.10.
const robertson = (y: Float64Array, d: Float64Array) => {
  d[0] = -0.04 * y[0] + 1e4 * y[1] * y[2];
  d[2] = 3e7 * y[1] * y[1];
  d[1] = -d[0] - d[2];
};
// Reference values at t = 40 (from memory, as tabulated for this problem in the IVP test-set
// literature); independently confirmed here with odex (Bulirsch–Stoer, rtol 1e-12), which agrees
// to 1e-13 in y1 and 4e-15 absolute in y2. y3 follows from y1 + y2 + y3 = 1 (an invariant).
const ROBERTSON_40 = { y1: 0.7158270687193772, y2: 9.185534764557e-6 };

describe("outputGrid", () => {
  it("outputGrid(10, 0.1) has 101 points from 0 to exactly 10", () => {
    const g = outputGrid(10, 0.1);
    expect(g.length).toBe(101);
    expect(g[0]).toBe(0);
    expect(g[100]).toBe(10);
    expect(g[37]).toBe(37 * 0.1);
  });
  it("outputGrid(10, 3) ends with tEnd when dt does not divide it", () => {
    expect(Array.from(outputGrid(10, 3))).toEqual([0, 3, 6, 9, 10]);
  });
  it("outputGrid rejects dt > tEnd and non-positive values", () => {
    expect(() => outputGrid(1, 2)).toThrow(RangeError);
    expect(() => outputGrid(0, 1)).toThrow(RangeError);
    expect(() => outputGrid(1, 0)).toThrow(RangeError);
  });
});

describe("integrate", () => {
  it("integrate(decay) matches x0·e^(−kt) at every grid point with both methods (closed form)", () => {
    const k = 0.7;
    const rhs = (y: Float64Array, d: Float64Array) => {
      d[0] = -k * y[0];
      d[1] = -2 * k * y[1];
    };
    // dt = 0.05 is much finer than the steps DoPri takes, so this exercises the dense output.
    const grid = outputGrid(20, 0.05);
    for (const method of ["dopri5", "rosenbrock"] as const) {
      const { values } = integrate(rhs, [100, 3], grid, { method, rtol: 1e-10, atol: 1e-14 });
      for (let j = 0; j < grid.length; j++) {
        const t = grid[j];
        expect(Math.abs(values[2 * j] - 100 * Math.exp(-k * t))).toBeLessThanOrEqual(1e-8 * 100 * Math.exp(-k * t) + 1e-13);
        expect(Math.abs(values[2 * j + 1] - 3 * Math.exp(-2 * k * t))).toBeLessThanOrEqual(1e-8 * 3 * Math.exp(-2 * k * t) + 1e-13);
      }
    }
  });

  it("integrate(Robertson, rosenbrock) reproduces the published values at t = 40 (Hairer & Wanner II)", () => {
    const { values, stats } = integrate(robertson, [1, 0, 0], [0, 0.4, 4, 40], { method: "rosenbrock", rtol: 1e-8, atol: 1e-14 });
    const [y1, y2, y3] = values.slice(9);
    expect(Math.abs(y1 - ROBERTSON_40.y1) / ROBERTSON_40.y1).toBeLessThan(1e-8);
    expect(Math.abs(y2 - ROBERTSON_40.y2) / ROBERTSON_40.y2).toBeLessThan(1e-7);
    expect(Math.abs(y1 + y2 + y3 - 1)).toBeLessThan(1e-12); // linear invariant, kept by any RK/Rosenbrock method
    expect(stats.method).toBe("rosenbrock");
    // An explicit method needs ~37,000 steps here at this tolerance; RODAS4 needs a small fraction of that.
    expect(stats.steps).toBeLessThan(2000);
  });

  it("integrate(Robertson, auto) detects stiffness, switches to the Rosenbrock method and stays accurate", () => {
    const { values, stats } = integrate(robertson, [1, 0, 0], [0, 40], { method: "auto", rtol: 1e-8, atol: 1e-14 });
    expect(stats.switchedAt).not.toBeNull();
    expect(stats.method).toBe("rosenbrock");
    expect(Math.abs(values[3] - ROBERTSON_40.y1) / ROBERTSON_40.y1).toBeLessThan(1e-8);
  });

  it("integrate(Robertson, rosenbrock) reaches t = 4e10 with y1 + y2 + y3 = 1 and y1 → 0 (stiff long run)", () => {
    const { values } = integrate(robertson, [1, 0, 0], [0, 4e10], { method: "rosenbrock", rtol: 1e-6, atol: 1e-20 });
    // Reference at t = 4e10 from memory (IVP test-set literature): y1 ≈ 5.2e-8 … hence only order of magnitude.
    expect(values[3]).toBeGreaterThan(1e-8);
    expect(values[3]).toBeLessThan(1e-7);
    expect(Math.abs(values[3] + values[4] + values[5] - 1)).toBeLessThan(1e-10);
  });

  it("integrate rejects bad tolerances, methods and grids", () => {
    const rhs = (y: Float64Array, d: Float64Array) => void (d[0] = -y[0]);
    expect(() => integrate(rhs, [1], [0, 1], { rtol: 0 })).toThrow(RangeError);
    expect(() => integrate(rhs, [1], [0, 1], { atol: -1 })).toThrow(RangeError);
    expect(() => integrate(rhs, [1], [1, 0])).toThrow(RangeError);
    expect(() => integrate(rhs, [1], [0, 1], { method: "euler" as "auto" })).toThrow(RangeError);
  });
});

describe("solveOde", () => {
  it("solveOde(decay circuit) follows x0·e^(−kt) in model units and × Ω in molecules (closed form)", () => {
    const model = compileModel(decayCircuit(0.25, 50));
    const sol = solveOde(model, { tEnd: 30, dt: 0.5, rtol: 1e-10, atol: 1e-12 });
    sol.times.forEach((t, j) => expect(sol.trace.X[j]).toBeCloseTo(50 * Math.exp(-0.25 * t), 8));
    const mol = solveOde(model, { tEnd: 30, dt: 0.5, rtol: 1e-10, atol: 1e-12, units: "molecules" });
    expect(mol.units).toBe("molecules");
    mol.times.forEach((t, j) => expect(Math.abs(mol.trace.X[j] - model.omega * 50 * Math.exp(-0.25 * t))).toBeLessThan(1e-7));
  });

  it("solveOde(ring timer) agrees with odex (Bulirsch–Stoer, an independent integrator and a hand-written RHS) to 1e-7", () => {
    const model = compileModel(load("examples/ring-timer.circuit.json"));
    const tEnd = 200;
    const sol = solveOde(model, { tEnd, dt: 2, method: "dopri5", rtol: 1e-11, atol: 1e-11 });
    const stiff = solveOde(model, { tEnd, dt: 2, method: "rosenbrock", rtol: 1e-9, atol: 1e-9 });
    // Ring timer of CONTRACT.md, written out by hand: v = 40, K = 20, n = 4, g = 0.2.
    const h = (x: number) => x ** 4 / (20 ** 4 + x ** 4);
    const f = (_t: number, y: number[]) => [40 * (1 - h(y[2])) - 0.2 * y[0], 40 * h(y[0]) - 0.2 * y[1], 40 * h(y[1]) - 0.2 * y[2]];
    const odex = new Solver(3);
    odex.absoluteTolerance = 1e-13;
    odex.relativeTolerance = 1e-13;
    odex.maxSteps = 1e6;
    let y = [0, 0, 0];
    let maxDiff = 0;
    let maxDiffStiff = 0;
    for (let j = 1; j < sol.times.length; j++) {
      y = odex.solve(f, sol.times[j - 1], y, sol.times[j]).y;
      ["A", "B", "C"].forEach((id, i) => {
        maxDiff = Math.max(maxDiff, Math.abs(sol.trace[id][j] - y[i]));
        maxDiffStiff = Math.max(maxDiffStiff, Math.abs(stiff.trace[id][j] - y[i]));
      });
    }
    // Amplitudes are ~200 nM, so these are ~5e-10 and ~5e-7 relative.
    expect(maxDiff).toBeLessThan(1e-7);
    expect(maxDiffStiff).toBeLessThan(1e-4);
    // The ring oscillates: the trace must not be flat (guards against comparing two zeros).
    expect(Math.max(...sol.trace.A) - Math.min(...sol.trace.A.slice(50))).toBeGreaterThan(50);
  });

  it("solveOde(Robertson as a circuit) with the exact Jacobian reproduces the published y1(40) (Hairer & Wanner II)", () => {
    // A → B (0.04), B + C → A + C (1e4), 2B → B + C (3e7): Robertson's equations as mass action.
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "s", amount: "molecules" },
      species: [{ id: "A", initial: 1 }, { id: "B", initial: 0 }, { id: "C", initial: 0 }],
      reactions: [
        { id: "r1", reactants: { A: 1 }, products: { B: 1 }, rate: { law: "mass_action", k: 0.04 } },
        { id: "r2", reactants: { B: 1, C: 1 }, products: { A: 1, C: 1 }, rate: { law: "mass_action", k: 1e4 } },
        { id: "r3", reactants: { B: 2 }, products: { B: 1, C: 1 }, rate: { law: "mass_action", k: 3e7 } },
      ],
    });
    const model = compileModel(c);
    const sol = solveOde(model, { tEnd: 40, dt: 40, method: "rosenbrock", rtol: 1e-8, atol: 1e-14 });
    expect(Math.abs(sol.trace.A[1] - ROBERTSON_40.y1) / ROBERTSON_40.y1).toBeLessThan(1e-8);
    expect(Math.abs(sol.trace.B[1] - ROBERTSON_40.y2) / ROBERTSON_40.y2).toBeLessThan(1e-7);
    // The exact Jacobian costs no right-hand-side evaluations: about 6 per step, not 6 + n.
    expect(sol.stats.rhsEvaluations).toBeLessThan(6.5 * sol.stats.steps);
    const auto = solveOde(model, { tEnd: 40, dt: 40, rtol: 1e-8, atol: 1e-14 });
    expect(auto.stats.switchedAt).not.toBeNull();
    expect(Math.abs(auto.trace.A[1] - ROBERTSON_40.y1) / ROBERTSON_40.y1).toBeLessThan(1e-8);
  });

  it("solveOde starts from y0 when given and rejects a y0 of the wrong length", () => {
    const model = compileModel(decayCircuit(1, 5));
    const sol = solveOde(model, { tEnd: 1, dt: 1, y0: [2], rtol: 1e-10, atol: 1e-12 });
    expect(sol.trace.X[1]).toBeCloseTo(2 * Math.exp(-1), 9);
    expect(() => solveOde(model, { tEnd: 1, dt: 1, y0: [1, 2] })).toThrow(RangeError);
  });
});
