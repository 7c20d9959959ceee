/**
 * Tau-leaping (Cao, Gillespie & Petzold 2006) against exact results and against the direct method,
 * with fixed seeds and tolerances in standard errors.
 */
import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateCells, simulateEnsemble } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { poisson } from "@/ssa/poisson";
import { CellRng, cellRngState } from "@/ssa/rng";
import { finalizeSummary } from "@/ssa/stats";
import type { Circuit } from "@/ssa/types";

const Z = 4;

describe("Poisson variates", () => {
  it.each([0.3, 4, 9.99, 10, 37.5, 1000, 1e6])("poisson(rng, %d) has mean and variance equal to the mean within 4 SE (textbook)", (lambda) => {
    const rng = new CellRng(cellRngState(77, Math.round(lambda)));
    const n = 40_000;
    let s = 0;
    let s2 = 0;
    let bad = 0;
    for (let k = 0; k < n; k++) {
      const v = poisson(rng, lambda);
      if (!(Number.isInteger(v) && v >= 0)) bad++;
      s += v;
      s2 += v * v;
    }
    expect(bad).toBe(0);
    const mean = s / n;
    const variance = (s2 - n * mean * mean) / (n - 1);
    expect(Math.abs(mean - lambda) / Math.sqrt(lambda / n)).toBeLessThan(Z);
    // SE of a sample variance: √((μ4 − σ⁴(n−3)/(n−1))/n), μ4 = λ(1+3λ) for a Poisson (textbook)
    const se = Math.sqrt((lambda * (1 + 3 * lambda) - (lambda * lambda * (n - 3)) / (n - 1)) / n);
    expect(Math.abs(variance - lambda) / se).toBeLessThan(Z);
  });
});

describe("tau-leaping", () => {
  const bigBirthDeath: Circuit = parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "min", amount: "molecules" },
    species: [{ id: "X", initial: 0 }],
    parameters: { k: 2000, g: 1 },
    reactions: [
      { id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } },
      { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
    ],
  });

  it("simulate(birth–death, tau) keeps the Poisson mean k/γ and Fano 1 within 4 SE, with far fewer steps than events (textbook)", () => {
    const N = 1500;
    const s = simulateEnsemble(compileModel(bigBirthDeath), { method: "tau", tEnd: 12, dt: 3, burnIn: 6, seed: 4 }, N);
    const n = 3 * N; // samples at 6, 9, 12 min, three lifetimes apart (correlation e^−3 ≈ 0.05)
    const st = s.stationary.X as { mean: number; fano: number };
    expect(Math.abs(st.mean - 2000) / Math.sqrt(2000 / n)).toBeLessThan(Z);
    expect(Math.abs(st.fano - 1) / Math.sqrt(2 / (n - 1))).toBeLessThan(Z + 1); // +1: samples slightly correlated
    expect(s.events).toBeGreaterThan(N * 2000 * 12 * 1.5);
  });

  it("simulate(ring timer at 30 fL, tau) matches the direct method's mean and CV within batch standard errors", () => {
    const ring: Circuit = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "nM" },
      volume_fL: 30,
      species: [{ id: "A", initial: 0 }, { id: "B", initial: 0 }, { id: "C", initial: 0 }],
      parameters: { v: 40, K: 20, n: 4, g: 0.2 },
      reactions: [
        { id: "make_A", products: { A: 1 }, rate: { law: "hill_repression", input: "C", vmax: "v", K: "K", n: "n" } },
        { id: "make_B", products: { B: 1 }, rate: { law: "hill_activation", input: "A", vmax: "v", K: "K", n: "n" } },
        { id: "make_C", products: { C: 1 }, rate: { law: "hill_activation", input: "B", vmax: "v", K: "K", n: "n" } },
        { id: "lose_A", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
        { id: "lose_B", reactants: { B: 1 }, rate: { law: "mass_action", k: "g" } },
        { id: "lose_C", reactants: { C: 1 }, rate: { law: "mass_action", k: "g" } },
      ],
    });
    const m = compileModel(ring);
    const batches = 8;
    const cellsPerBatch = 6;
    // Batch means (common practice): each batch pools its own cells' samples after burn-in, and
    // the spread of batch statistics gives the standard error without assuming a distribution.
    const stats = (method: "ssa" | "tau") => {
      const cv: number[] = [];
      const mean: number[] = [];
      const period: number[] = [];
      for (let b = 0; b < batches; b++) {
        const o = { method, tEnd: 400, dt: 1, burnIn: 50, seed: 1000 + b };
        const p = simulateCells(m, o, 0, cellsPerBatch);
        const s = finalizeSummary(p, { method, seed: o.seed, units: "molecules", species: m.species, times: Array.from({ length: 401 }, (_, g) => g), burnIn: 50, omega: m.omega, timeUnit: "min", amountUnit: "nM", wallS: 0 });
        cv.push(s.stationary.C?.cv as number);
        mean.push(s.stationary.C?.mean as number);
        period.push(s.period.A?.mean as number);
      }
      const avg = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
      const se = (xs: number[]) => Math.sqrt(xs.reduce((a, x) => a + (x - avg(xs)) ** 2, 0) / (xs.length - 1) / xs.length);
      return { cv: [avg(cv), se(cv)], mean: [avg(mean), se(mean)], period: [avg(period), se(period)] };
    };
    const direct = stats("ssa");
    const tau = stats("tau");
    for (const key of ["cv", "mean", "period"] as const) {
      const [a, sa] = direct[key] as [number, number];
      const [b, sb] = tau[key] as [number, number];
      expect(Math.abs(a - b) / Math.hypot(sa, sb)).toBeLessThan(Z);
    }
    expect(Math.abs((tau.cv[0] as number) - (direct.cv[0] as number)) / (direct.cv[0] as number)).toBeLessThan(0.05);
  });
});
