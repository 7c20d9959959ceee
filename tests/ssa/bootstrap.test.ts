import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { bootstrapNoise, bootstrapRng, compareCv, pooledStatistics } from "@/ssa/bootstrap";
import { cellStatsOf, decodeCellStats, encodeCellStats, type CellStats } from "@/ssa/cell-stats";
import { burnInOf, simulateCells, summarize, type EnsembleOptions } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { mergePartials, type Partial } from "@/ssa/stats";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8"));
const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));

/** Per-cell sums of synthetic cells: x_cj = μ + a_c + e_cj with a_c ~ N(0, τ²), e_cj ~ N(0, σ²). */
function syntheticCells(seed: number, cells: number, samples: number, mu: number, tau: number, sigma: number): CellStats {
  const rng = bootstrapRng(seed, 999);
  const normal = () => Math.sqrt(-2 * Math.log(1 - rng.uniform())) * Math.cos(2 * Math.PI * rng.uniform()); // Box & Muller 1958
  const cs: CellStats = {
    cells, nSpecies: 1, samples,
    sum: new Float64Array(cells), sumSq: new Float64Array(cells),
    periodCount: new Float64Array(cells), periodSum: new Float64Array(cells), periodSumSq: new Float64Array(cells),
  };
  for (let c = 0; c < cells; c++) {
    const level = mu + tau * normal();
    for (let j = 0; j < samples; j++) {
      const x = level + sigma * normal();
      cs.sum[c]! += x;
      cs.sumSq[c]! += x * x;
    }
  }
  return cs;
}

describe("per-cell statistics", () => {
  const options: EnsembleOptions = { method: "ssa", tEnd: 300, dt: 1, seed: 17, burnIn: 60 };
  const model = compileModel(ringTimer);
  const whole = simulateCells(model, options, 0, 90);
  const parts = [simulateCells(model, options, 0, 25), simulateCells(model, options, 25, 60), simulateCells(model, options, 60, 90)];

  it("simulateCells carries Σx and Σx² per cell; any chunking and merge order gives the same bits", () => {
    const orders = [[0, 1, 2], [2, 0, 1], [1, 2, 0]];
    const want = encodeCellStats(cellStatsOf(whole));
    for (const [i, j, k] of orders) {
      const merged = mergePartials(mergePartials(parts[i!]!, parts[j!]!), parts[k!]!);
      expect(Buffer.from(encodeCellStats(cellStatsOf(merged)).buffer).equals(Buffer.from(want.buffer))).toBe(true);
    }
    expect(whole.cellSamples).toBe(300 - 60 + 1); // grid times 60, 61, …, 300
  });

  it("pooledStatistics(all cells) equals the summary's stationary moments and period statistics (same pooled definition)", () => {
    const summary = summarize(model, options, whole);
    const point = pooledStatistics(cellStatsOf(whole));
    model.species.forEach((id, s) => {
      const st = summary.stationary[id]!;
      const p = point[s]!;
      expect(p[0]).toBeCloseTo(st.mean, 10);
      expect(p[1]! ** 2 / st.variance).toBeCloseTo(1, 11);
      expect(p[2]! / st.cv).toBeCloseTo(1, 11);
      expect(p[3]! / st.fano).toBeCloseTo(1, 11);
      // Periods pool the same crossing intervals as `period.crossings` (and `period` when oscillating).
      expect(p[4]! / summary.period[id]!.crossings.mean).toBeCloseTo(1, 11);
      expect(p[5]! / summary.period[id]!.crossings.cv).toBeCloseTo(1, 9);
    });
  });

  it("encodeCellStats / decodeCellStats round-trip, and a partial without per-cell sums is refused", () => {
    const cs = cellStatsOf(whole);
    const back = decodeCellStats(encodeCellStats(cs));
    expect(back.cells).toBe(90);
    expect(Array.from(back.periodSum)).toEqual(Array.from(cs.periodSum));
    const stripped: Partial = { ...whole, cellSamples: undefined };
    expect(() => cellStatsOf(stripped)).toThrow(RangeError);
    expect(() => decodeCellStats(new Float64Array([7, 1, 1, 1]))).toThrow(RangeError);
  });
});

describe("bootstrapNoise", () => {
  it("bootstrapNoise is reproducible for a seed and changes with the stream", () => {
    const cs = syntheticCells(1, 60, 10, 40, 4, 6);
    const a = bootstrapNoise(cs, { seed: 5, replicates: 200 });
    const b = bootstrapNoise(cs, { seed: 5, replicates: 200 });
    const c = bootstrapNoise(cs, { seed: 5, stream: 1, replicates: 200 });
    expect(a).toEqual(b);
    expect(c[0]!.cv.lo).not.toBe(a[0]!.cv.lo);
    expect(a[0]!.cv.lo).toBeLessThan(a[0]!.cv.value);
    expect(a[0]!.cv.hi).toBeGreaterThan(a[0]!.cv.value);
  });

  it("bootstrapNoise's 95% interval covers the true CV and mean in 90–99% of 200 synthetic ensembles (seeded)", () => {
    // Known CV: √(τ² + σ²)/μ for cells with a shared level (τ) and sample noise (σ); within-cell
    // samples are correlated, which is why whole cells are resampled. Percentile bootstrap:
    // Efron & Tibshirani 1993. The band 90–99% is the issue's; the binomial SE of a 95% rate over
    // 200 repetitions is 1.5 points.
    const mu = 50, tau = 5, sigma = 10;
    const trueCv = Math.sqrt(tau * tau + sigma * sigma) / mu;
    let coveredCv = 0;
    let coveredMean = 0;
    const reps = 200;
    for (let r = 0; r < reps; r++) {
      const cs = syntheticCells(1000 + r, 100, 20, mu, tau, sigma);
      const [iv] = bootstrapNoise(cs, { seed: r, replicates: 1000 });
      if (iv!.cv.lo <= trueCv && trueCv <= iv!.cv.hi) coveredCv++;
      if (iv!.mean.lo <= mu && mu <= iv!.mean.hi) coveredMean++;
    }
    expect(coveredCv / reps).toBeGreaterThanOrEqual(0.9);
    expect(coveredCv / reps).toBeLessThanOrEqual(0.99);
    expect(coveredMean / reps).toBeGreaterThanOrEqual(0.9);
    expect(coveredMean / reps).toBeLessThanOrEqual(0.99);
  });

  it("bootstrapNoise(birth–death ensemble) gives a CV interval that covers 1/√(k/γ) (Poisson; textbook)", () => {
    const model = compileModel(birthDeath, { k: 20, g: 0.5 });
    const o: EnsembleOptions = { method: "ssa", tEnd: 200, dt: 1, seed: 3, burnIn: 20 };
    const [iv] = bootstrapNoise(cellStatsOf(simulateCells(model, o, 0, 200)), { seed: 3 });
    expect(burnInOf(o)).toBe(20);
    expect(iv!.cv.lo).toBeLessThanOrEqual(1 / Math.sqrt(40));
    expect(iv!.cv.hi).toBeGreaterThanOrEqual(1 / Math.sqrt(40));
    expect(iv!.fano.lo).toBeLessThanOrEqual(1);
    expect(iv!.fano.hi).toBeGreaterThanOrEqual(1);
  });
});

describe("compareCv: is B less noisy than A?", () => {
  it("compareCv gives p ≥ 0.05 for identical synthetic designs in most of 100 repetitions, and p < 0.05 for CV 0.2 against 0.3 in all", () => {
    // Under no difference the p-value is close to uniform, so about 5% fall below 0.05; allow 10%.
    let falseAlarms = 0;
    let detected = 0;
    for (let r = 0; r < 100; r++) {
      const a = syntheticCells(5000 + r, 80, 10, 50, 0, 10); // CV 0.2
      const same = syntheticCells(7000 + r, 80, 10, 50, 0, 10); // CV 0.2
      const noisier = syntheticCells(9000 + r, 80, 10, 50, 0, 15); // CV 0.3
      if (compareCv(a, 0, same, 0, { seed: r, replicates: 500 }).cv.pValue < 0.05) falseAlarms++;
      const t = compareCv(a, 0, noisier, 0, { seed: r, replicates: 500 }).cv;
      if (t.pValue < 0.05 && t.difference > 0) detected++;
    }
    expect(falseAlarms).toBeLessThanOrEqual(10);
    expect(detected).toBe(100);
  });

  const bd = (k: number, seed: number, cells = 60) =>
    cellStatsOf(simulateCells(compileModel(birthDeath, { k, g: 0.5 }), { method: "ssa", tEnd: 120, dt: 1, seed, burnIn: 20 }, 0, cells));

  it("compareCv on birth–death ensembles: same design with other seeds is not significant in most of 30 pairs; mean 20 against 80 always is", () => {
    let falseAlarms = 0;
    let detected = 0;
    for (let r = 0; r < 30; r++) {
      const a = bd(10, 100 + r);
      if (compareCv(a, 0, bd(10, 200 + r), 0, { seed: r, replicates: 500 }).cv.pValue < 0.05) falseAlarms++;
      // CV 1/√20 = 0.224 against 1/√80 = 0.112 (Poisson; textbook): B is less noisy.
      const t = compareCv(a, 0, bd(40, 300 + r), 0, { seed: r, replicates: 500 }).cv;
      if (t.pValue < 0.05 && t.hi < 0) detected++;
    }
    expect(falseAlarms).toBeLessThanOrEqual(4); // expected 1.5 at a 5% level
    expect(detected).toBe(30);
  });

  it("compareCv with common random numbers: identical designs give difference 0 and p = 1; pairs need equal cell counts", () => {
    const a = bd(10, 42);
    const b = bd(10, 42);
    const t = compareCv(a, 0, b, 0, { seed: 1, replicates: 200, paired: true });
    expect(t.cv).toMatchObject({ difference: 0, lo: 0, hi: 0, pValue: 1 });
    expect(() => compareCv(a, 0, bd(10, 42, 30), 0, { seed: 1, paired: true })).toThrow(RangeError);
  });

  it("compareCv on the ring timer tests period CV too", () => {
    const m = compileModel(ringTimer);
    const o: EnsembleOptions = { method: "ssa", tEnd: 400, dt: 1, seed: 8, burnIn: 60 };
    const a = cellStatsOf(simulateCells(m, o, 0, 40));
    const t = compareCv(a, 0, a, 0, { seed: 2, replicates: 200, paired: true });
    expect(t.periodCv).not.toBeNull();
    expect(t.periodCv!.pValue).toBe(1);
  });
});
