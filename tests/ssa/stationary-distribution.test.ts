import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { compileModel } from "@/ssa/model";
import { simulate } from "@/ssa/simulate";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));

describe("stationary_distribution", () => {
  // k = 5, γ = 1: stationary Poisson(5) (textbook birth–death; van Kampen). Sampling every 5
  // relaxation times keeps successive samples of a cell nearly independent (lag correlation e^-5).
  const model = compileModel(birthDeath, { k: 5, g: 1 });
  const cells = 400;
  const out = simulate(model, { method: "ssa", tEnd: 500, dt: 5, runs: cells, seed: 11, burnIn: 50 });
  const dist = out.stationary_distribution!.X;
  const total = dist.counts.reduce((a, b) => a + b, 0);

  it("simulate(birth–death) pools every cell at every grid time after burn-in, once", () => {
    const points = out.times.filter((t) => t >= 50).length;
    expect(total).toBe(cells * points);
    expect(dist.values).toEqual([...dist.values].sort((a, b) => a - b));
  });

  it("simulate(birth–death) distribution has the moments reported in `stationary`", () => {
    const mean = dist.values.reduce((a, v, k) => a + v * dist.counts[k]!, 0) / total;
    const variance = dist.values.reduce((a, v, k) => a + (v - mean) ** 2 * dist.counts[k]!, 0) / (total - 1);
    expect(mean).toBeCloseTo(out.stationary.X!.mean, 10);
    expect(variance).toBeCloseTo(out.stationary.X!.variance, 8);
  });

  it("simulate(birth–death, k = 5, γ = 1) distribution matches Poisson(5) within 4 standard errors at each count 0..12", () => {
    let pmf = Math.exp(-5);
    for (let n = 0; n <= 12; n++) {
      if (n > 0) pmf *= 5 / n;
      const at = dist.values.indexOf(n);
      const observed = at >= 0 ? dist.counts[at]! / total : 0;
      const se = Math.sqrt((pmf * (1 - pmf)) / total); // binomial standard error of a frequency
      expect(Math.abs(observed - pmf) / se, `count ${n}`).toBeLessThanOrEqual(4);
    }
  });
});
