/**
 * The direct method against exact results, with fixed seeds and tolerances in standard errors
 * (SCIENCE.md "Statistical checks"): |z| ≤ 4 passes a correct engine and fails a wrong propensity.
 */
import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateEnsemble } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import type { Circuit } from "@/ssa/types";

const Z = 4;

function circuit(c: Omit<Circuit, "format">): Circuit {
  return parseCircuit({ format: "burstwise.circuit/1", ...c });
}

const birthDeath = (amount: "molecules" | "nM") =>
  circuit({
    units: { time: "min", amount },
    ...(amount === "nM" ? { volume_fL: 1 } : {}),
    species: [{ id: "X", initial: 0 }],
    parameters: { k: 10, g: 0.1 },
    reactions: [
      { id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } },
      { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
    ],
  });

describe("direct method", () => {
  it("birth–death from empty is Poisson at every time: mean = variance = (k/γ)(1 − e^(−γt)) (textbook, van Kampen)", () => {
    const N = 4000;
    const s = simulateEnsemble(compileModel(birthDeath("molecules")), { method: "ssa", tEnd: 100, dt: 10, seed: 11 }, N);
    s.times.forEach((t, g) => {
      if (t === 0) return;
      const m = 100 * (1 - Math.exp(-0.1 * t));
      const mean = s.mean.X?.[g] as number;
      const variance = (s.sd.X?.[g] as number) ** 2;
      expect(Math.abs(mean - m) / Math.sqrt(m / N)).toBeLessThan(Z);
      expect(Math.abs(variance - m) / (m * Math.sqrt(2 / (N - 1)))).toBeLessThan(Z); // Gaussian approx. of SE(s²)
    });
    expect(Math.abs((s.final.X?.fano as number) - 1) / Math.sqrt(2 / (N - 1))).toBeLessThan(Z);
  });

  it("birth–death in nM at 1 fL has mean Ω·(k/γ)(1 − e^(−γt)), 60.22 molecules at steady state (SI Avogadro)", () => {
    const N = 3000;
    const model = compileModel(birthDeath("nM"));
    const o = { method: "ssa" as const, tEnd: 120, dt: 10, seed: 5 };
    const s = simulateEnsemble(model, o, N);
    s.times.forEach((t, g) => {
      if (t === 0) return;
      const m = 0.602214076 * 100 * (1 - Math.exp(-0.1 * t)); // zero order ×Ω, first order unchanged
      expect(Math.abs((s.mean.X?.[g] as number) - m) / Math.sqrt(m / N)).toBeLessThan(Z);
    });
    const inModel = simulateEnsemble(model, o, N, { units: "model" });
    expect(inModel.final.X?.mean).toBeCloseTo((s.final.X?.mean as number) / 0.602214076, 9);
    expect(inModel.final.X?.fano).toBeCloseTo((s.final.X?.fano as number) / 0.602214076, 9);
  });

  it("pure decay keeps a binomial count: mean x0·e^(−kt), variance x0·p(1−p) (textbook)", () => {
    const N = 2000;
    const c = circuit({
      units: { time: "h", amount: "molecules" },
      species: [{ id: "X", initial: 500 }],
      reactions: [{ id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: 0.3 } }],
    });
    const s = simulateEnsemble(compileModel(c), { method: "ssa", tEnd: 6, dt: 2, seed: 9 }, N);
    s.times.forEach((t, g) => {
      const p = Math.exp(-0.3 * t);
      const v = 500 * p * (1 - p);
      if (v === 0) return expect(s.mean.X?.[g]).toBe(500);
      expect(Math.abs((s.mean.X?.[g] as number) - 500 * p) / Math.sqrt(v / N)).toBeLessThan(Z);
      expect(Math.abs((s.sd.X?.[g] as number) ** 2 - v) / (v * Math.sqrt(2 / (N - 1)))).toBeLessThan(Z);
    });
  });

  it("a dimerisation 2M → D from two molecules fires at rate k·x(x−1) = 2k: P(D = 1 by t) = 1 − e^(−2kt) (Gillespie 1977)", () => {
    const N = 4000;
    const c = circuit({
      units: { time: "s", amount: "molecules" },
      species: [{ id: "M", initial: 2 }, { id: "D", initial: 0 }],
      reactions: [{ id: "dimerise", reactants: { M: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: 0.25 } }],
    });
    const s = simulateEnsemble(compileModel(c), { method: "ssa", tEnd: 2, dt: 1, seed: 3 }, N);
    for (const [g, t] of [[1, 1], [2, 2]] as const) {
      const p = 1 - Math.exp(-2 * 0.25 * t);
      const frac = s.mean.D?.[g] as number; // D is 0 or 1, so its mean is the fraction of cells
      expect(Math.abs(frac - p) / Math.sqrt((p * (1 - p)) / N)).toBeLessThan(Z);
    }
  });

  it("a two-stage reporter has protein mean km·kp/(γm·γp) and Fano 1 + b/(1 + γp/γm), b = kp/γm (Thattai & van Oudenaarden 2001)", () => {
    const N = 1500;
    const c = circuit({
      units: { time: "min", amount: "molecules" },
      species: [{ id: "M", initial: 10 }, { id: "P", initial: 1000 }],
      parameters: { km: 2, gm: 0.2, kp: 2, gp: 0.02 },
      reactions: [
        { id: "transcribe", products: { M: 1 }, rate: { law: "mass_action", k: "km" } },
        { id: "lose_M", reactants: { M: 1 }, rate: { law: "mass_action", k: "gm" } },
        { id: "translate", reactants: { M: 1 }, products: { M: 1, P: 1 }, rate: { law: "mass_action", k: "kp" } },
        { id: "lose_P", reactants: { P: 1 }, rate: { law: "mass_action", k: "gp" } },
      ],
    });
    // Samples at 300, 550, 800 min: 5 protein lifetimes apart (correlation e^−5), so about 3N independent draws.
    const s = simulateEnsemble(compileModel(c), { method: "ssa", tEnd: 800, dt: 250, burnIn: 300, seed: 21 }, N);
    const mean = (2 * 2) / (0.2 * 0.02);
    const fano = 1 + 10 / (1 + 0.02 / 0.2);
    const n = 3 * N;
    const st = s.stationary.P as { mean: number; variance: number; fano: number };
    expect(Math.abs(st.mean - mean) / Math.sqrt((fano * mean) / n)).toBeLessThan(Z);
    expect(Math.abs(st.fano - fano) / (fano * Math.sqrt(2 / (n - 1)))).toBeLessThan(Z);
    expect(Math.abs((s.stationary.M?.fano as number) - 1) / Math.sqrt(2 / (n - 1))).toBeLessThan(Z); // mRNA is Poisson
  });
});
