import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { conservationAnalysis, lyapunov, lyapunovResidual, maxAbs } from "@/ssa/linalg";
import { linearNoise, meanFieldJacobian, rateJacobian } from "@/ssa/lna";
import { compileModel } from "@/ssa/model";

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

const mixed = parseCircuit({
  format: "burstwise.circuit/1",
  units: { time: "min", amount: "nM" },
  volume_fL: 1.5,
  species: [{ id: "A", initial: 3 }, { id: "B", initial: 1 }, { id: "C", initial: 2 }],
  parameters: { k: 0.3, v: 4, K: 2.5, n: 2.5, kd: 0.05, h: 3 },
  reactions: [
    { id: "dimerise", reactants: { A: 2 }, products: { B: 1 }, rate: { law: "mass_action", k: "kd" } },
    { id: "hetero", reactants: { A: 1, C: 1 }, products: { B: 2 }, rate: { law: "mass_action", k: "k" } },
    { id: "act", products: { C: 1 }, rate: { law: "hill_activation", input: "B", vmax: "v", K: "K", n: "n", basal: 0.1 } },
    { id: "rep", products: { A: 1 }, rate: { law: "hill_repression", input: "C", vmax: "v", K: "K", n: "h" } },
    {
      id: "formula",
      reactants: { B: 1 },
      rate: { law: "expression", expression: "k * B^2 / (K + B) + exp(-A) * sqrt(C) - log(1 + A*C) / 10 + pow(A, 1.5) * min(B, C) + max(A, 0.5) / (1 + C^h)" },
    },
  ],
});

describe("rateJacobian", () => {
  it("rateJacobian(mixed laws) equals central finite differences at random states to 1e-7 relative", () => {
    const model = compileModel(mixed);
    const rnd = mulberry32(12345);
    const nS = 3;
    const nR = model.nReactions;
    const f1 = new Float64Array(nR);
    const f2 = new Float64Array(nR);
    for (let trial = 0; trial < 20; trial++) {
      const y = Float64Array.from([0.2 + 5 * rnd(), 0.2 + 5 * rnd(), 0.2 + 5 * rnd()]);
      const J = rateJacobian(model, y);
      for (let j = 0; j < nS; j++) {
        const h = 1e-5 * y[j];
        const yp = Float64Array.from(y);
        const ym = Float64Array.from(y);
        yp[j] += h;
        ym[j] -= h;
        model.rates(yp, f1);
        model.rates(ym, f2);
        for (let r = 0; r < nR; r++) {
          const fd = (f1[r] - f2[r]) / (2 * h);
          expect(Math.abs(J[r * nS + j] - fd)).toBeLessThanOrEqual(1e-7 * (Math.abs(fd) + 1));
        }
      }
    }
  });

  it("rateJacobian of a Hill law at x = 0 is 1/K·vmax for n = 1 and 0 for n > 1 (worked by hand)", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }, { id: "Y", initial: 0 }],
      reactions: [
        { id: "a", products: { Y: 1 }, rate: { law: "hill_activation", input: "X", vmax: 6, K: 3, n: 1 } },
        { id: "b", products: { Y: 1 }, rate: { law: "hill_activation", input: "X", vmax: 6, K: 3, n: 2 } },
      ],
    });
    const J = rateJacobian(compileModel(c), new Float64Array([0, 0]));
    expect(J[0]).toBeCloseTo(2, 14);
    expect(J[2]).toBe(0);
  });

  it("meanFieldJacobian = S·∂f/∂y: the decay X → ∅ at rate k gives −k (worked by hand)", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 1 }],
      parameters: { k: 0.7 },
      reactions: [{ id: "d", reactants: { X: 1 }, rate: { law: "mass_action", k: "k" } }],
    });
    expect(Array.from(meanFieldJacobian(compileModel(c), new Float64Array([4])))).toEqual([-0.7]);
  });
});

describe("lyapunov", () => {
  it("lyapunov(A, D) leaves a residual below 1e-12·‖D‖ for random stable A of sizes 1…60 (both solvers)", () => {
    const rnd = mulberry32(99);
    for (const n of [1, 2, 5, 17, 40, 41, 60]) {
      // A = −(n+1)·I + random: diagonally dominant, hence stable (Gershgorin).
      const A = new Float64Array(n * n);
      for (let i = 0; i < n * n; i++) A[i] = rnd() - 0.5;
      for (let i = 0; i < n; i++) A[i * n + i] -= n + 1;
      const B = new Float64Array(n * n);
      for (let i = 0; i < n * n; i++) B[i] = rnd();
      const D = new Float64Array(n * n); // D = B·Bᵀ, symmetric positive semidefinite
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < n; k++) D[i * n + j] += B[i * n + k] * B[j * n + k];
      const S = lyapunov(A, D, n);
      expect(maxAbs(lyapunovResidual(A, S, D, n))).toBeLessThan(1e-12 * maxAbs(D));
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(S[i * n + j]).toBe(S[j * n + i]);
    }
  });

  it("lyapunov of the scalar equation 2aσ + d = 0 gives σ = −d/(2a) (worked by hand)", () => {
    expect(lyapunov(new Float64Array([-0.5]), new Float64Array([3]), 1)[0]).toBeCloseTo(3, 15);
  });
});

describe("conservationAnalysis", () => {
  it("conservationAnalysis finds A − B and A + C conserved in A + B ⇌ C and links the dependent species exactly", () => {
    // Species A, B, C, E; reactions: A + B → C, C → A + B, E → ∅ … with E independent.
    // S (species × reactions): A: [-1, 1, 0], B: [-1, 1, 0], C: [1, -1, 0], E: [0, 0, -1]
    const S = Float64Array.from([-1, 1, 0, -1, 1, 0, 1, -1, 0, 0, 0, -1]);
    const c = conservationAnalysis(S, 4, 3);
    expect(c.independent).toEqual([0, 3]);
    expect(c.dependent).toEqual([1, 2]);
    // B = 1·A (+ const), C = −1·A (+ const); E does not enter.
    expect(Array.from(c.link)).toEqual([1, 0, -1, 0]);
  });
});

describe("linearNoise", () => {
  it("linearNoise(birth–death) is Poisson: variance = mean in molecules (textbook)", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "nM" },
      volume_fL: 10,
      species: [{ id: "X", initial: 0 }],
      parameters: { k: 2, g: 0.5 },
      reactions: [
        { id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } },
        { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
      ],
    });
    const model = compileModel(c);
    const { covariance, mean } = linearNoise(model, new Float64Array([4]));
    expect(mean[0]).toBeCloseTo(4 * model.omega, 12);
    expect(covariance[0]).toBeCloseTo(4 * model.omega, 10);
  });
});
