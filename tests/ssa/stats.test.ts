import { describe, expect, it } from "vitest";

import { acfRange, addCellLagSums, makeAcfSums } from "@/ssa/oscillation";
import {
  PARTIAL_FORMAT,
  cellPeriods,
  equalWidthHistogram,
  finalizeSummary,
  histogramsOfBlock,
  mergePartials,
  quantileSorted,
  quantileSparse,
  sortSamples,
  sparseMoments,
  type Partial,
} from "@/ssa/stats";

/** A partial for cells [first, last) of one species and one grid point holding `values`. */
function partialOf(first: number, values: number[], periods: number[][] = values.map(() => [])): Partial {
  const block = Float64Array.from(values);
  const h = histogramsOfBlock(block, 1, values.length, values.length);
  const ptr = [0];
  for (const p of periods) ptr.push((ptr[ptr.length - 1] as number) + p.length);
  return {
    format: PARTIAL_FORMAT,
    nSpecies: 1,
    nTimes: 1,
    cells: values.length,
    events: values.length * 10,
    ...h,
    segments: [
      {
        first,
        last: first + values.length,
        species: [{ cellPtr: Float64Array.from(ptr), periods: Float64Array.from(periods.flat()), amplitudes: Float64Array.from(periods.flat().map((p) => p / 10)) }],
      },
    ],
  };
}

const finalizeOpts = { method: "ssa" as const, seed: 1, units: "molecules" as const, species: ["X"], times: [0], burnIn: 0, omega: 1, timeUnit: "min", amountUnit: "molecules", wallS: 1 };

describe("quantiles and moments", () => {
  it("quantileSorted is Hyndman & Fan type 7: quantiles of (1,2,3,4,10) at .05 .25 .5 .75 .95 are 1.2 2 3 4 8.8", () => {
    // By hand: h = (n−1)p; p = 0.95 gives h = 3.8, so 4 + 0.8·(10 − 4) = 8.8; p = 0.05 gives 1 + 0.2·1.
    const q = [0.05, 0.25, 0.5, 0.75, 0.95].map((p) => quantileSorted([1, 2, 3, 4, 10], p));
    [1.2, 2, 3, 4, 8.8].forEach((v, k) => expect(q[k]).toBeCloseTo(v, 12));
  });

  it("quantileSparse equals quantileSorted of the expanded sample for every p", () => {
    const sample = [0, 0, 0, 1, 3, 3, 7, 7, 7, 7, 8, 12, 12, 40].sort((a, b) => a - b);
    const h = histogramsOfBlock(Float64Array.from(sample), 1, sample.length, sample.length);
    for (let p = 0; p <= 1.0000001; p += 0.01) {
      expect(quantileSparse(h.histValues, h.histCounts, sample.length, p)).toBeCloseTo(quantileSorted(sample, Math.min(p, 1)), 12);
    }
  });

  it("sparseMoments gives the sample mean and the n−1 variance of the expanded sample", () => {
    const h = histogramsOfBlock(Float64Array.from([2, 4, 4, 4, 5, 5, 7, 9]), 1, 8, 8);
    const m = sparseMoments([{ values: h.histValues, counts: h.histCounts }]);
    expect(m.mean).toBe(5);
    expect(m.variance).toBeCloseTo(32 / 7, 14); // Σ(x−5)² = 32, by hand
  });
});

describe("merging partials", () => {
  it("mergePartials is exact and order-independent: any split and order gives the same summary bytes", () => {
    const values = [5, 3, 3, 9, 0, 12, 7, 7, 1, 4, 4, 4];
    const periods = values.map((v, k) => (k % 3 === 0 ? [20 + v, 21 + k / 7] : [19.5 + v / 3]));
    const whole = finalizeSummary(partialOf(0, values, periods), finalizeOpts);
    const parts = [partialOf(0, values.slice(0, 5), periods.slice(0, 5)), partialOf(5, values.slice(5, 7), periods.slice(5, 7)), partialOf(7, values.slice(7), periods.slice(7))];
    const orders = [
      [0, 1, 2],
      [2, 1, 0],
      [1, 0, 2],
      [2, 0, 1],
    ];
    for (const [i, j, k] of orders) {
      const merged = mergePartials(mergePartials(parts[i as number] as Partial, parts[j as number] as Partial), parts[k as number] as Partial);
      expect(JSON.stringify(finalizeSummary(merged, finalizeOpts))).toBe(JSON.stringify(whole));
      expect(merged.segments).toHaveLength(1);
    }
  });

  it("mergePartials refuses overlapping cell ranges", () => {
    expect(() => mergePartials(partialOf(0, [1, 2, 3]), partialOf(2, [4]))).toThrow(RangeError);
  });
});

describe("periods", () => {
  it("cellPeriods finds the period of a sampled sine wave to within the grid's interpolation error", () => {
    const dt = 0.5;
    const n = 2001;
    const times = Float64Array.from({ length: n }, (_, g) => g * dt);
    const y = Float64Array.from(times, (t) => 100 + 50 * Math.sin((2 * Math.PI * t) / 23.7));
    const periods: number[] = [];
    const amps: number[] = [];
    cellPeriods(y, 0, 1, times, 200, n, 2, new Float64Array(n), periods, amps);
    expect(periods.length).toBeGreaterThan(30);
    for (const p of periods) expect(Math.abs(p - 23.7)).toBeLessThan(0.02);
    for (const a of amps) expect(Math.abs(a - 50)).toBeLessThan(0.5);
  });

  it("cellPeriods ignores a path whose band is narrower than minBand", () => {
    const times = Float64Array.from({ length: 100 }, (_, g) => g);
    const y = Float64Array.from(times, (t) => 10 + (t % 2));
    const periods: number[] = [];
    expect(cellPeriods(y, 0, 1, times, 0, 100, 2, new Float64Array(100), periods, [])).toBe(0);
  });

  it("finalizeSummary reports count 0 and null statistics when crossing intervals are irregular (CV ≥ 0.5)", () => {
    const irregular = partialOf(0, [1, 2, 3], [[5, 40], [12, 1], [30, 2]]);
    const s = finalizeSummary(irregular, finalizeOpts);
    expect(s.period.X?.count).toBe(0);
    expect(s.period.X?.oscillating).toBe(false);
    expect(s.period.X?.crossings.count).toBe(6);
    expect(JSON.parse(JSON.stringify(s)).period.X.mean).toBeNull();
    const regular = finalizeSummary(partialOf(0, [1, 2, 3], [[20, 21], [19, 20.5], [20, 20]]), finalizeOpts);
    expect(regular.period.X?.count).toBe(6);
    expect(regular.period.X?.mean).toBeCloseTo(20.0833333333, 9);
  });

  it("equalWidthHistogram puts every value in a bin and closes the last bin", () => {
    const h = equalWidthHistogram(Float64Array.from([1, 2, 2, 3, 4, 5, 9, 10, 10]));
    expect(h.edges[0]).toBe(1);
    expect(h.edges[h.edges.length - 1]).toBe(10);
    expect(h.counts.reduce((a, b) => a + b, 0)).toBe(9);
    expect(h.counts.length).toBe(3); // ⌈√9⌉
  });
});

describe("fast paths that must equal the plain computation", () => {
  // A small deterministic generator for test data (Park & Miller 1988 minimal standard).
  const lcg = (seed: number) => () => (seed = (seed * 48271) % 2147483647) / 2147483647;

  it("sortSamples equals copy-and-sort for counts (strided, in place; few and many), fractions, negatives and wide ranges", () => {
    const rnd = lcg(7);
    const cases: number[][] = [
      Array.from({ length: 1600 }, () => Math.floor(rnd() * 300)),
      Array.from({ length: 250 }, () => 40 + Math.floor(rnd() * 5)),
      Array.from({ length: 97 }, () => rnd() * 10),
      Array.from({ length: 50 }, () => Math.floor(rnd() * 20) - 10),
      Array.from({ length: 64 }, () => Math.floor(rnd() * 1e9)),
      Array.from({ length: 10 }, () => Math.floor(rnd() * 300)),
      Array.from({ length: 24 }, () => Math.floor(rnd() * 4)),
      Array.from({ length: 25 }, () => Math.floor(rnd() * 4)),
      [5],
      [],
    ];
    for (const values of cases) {
      const expected = Float64Array.from(values).sort();
      const stride = 3;
      const src = new Float64Array(values.length * stride + 1).fill(-1);
      values.forEach((v, k) => (src[1 + k * stride] = v));
      const dst = new Float64Array(values.length + 2).fill(-7);
      sortSamples(src, 1, stride, values.length, dst, 2 - 1);
      expect(Array.from(dst.subarray(1, 1 + values.length))).toEqual(Array.from(expected));
      expect(dst[0]).toBe(-7);
      const inPlace = Float64Array.from([9, ...values, 9]);
      sortSamples(inPlace, 1, 1, values.length, inPlace, 1);
      expect(Array.from(inPlace)).toEqual([9, ...Array.from(expected), 9]);
    }
  });

  it("addCellLagSums gives the lag sums Σ_t u_t·u_(t+k) of every lag exactly, for any lag count", () => {
    const rnd = lcg(11);
    for (const n of [9, 10, 11, 12, 13, 40, 300]) {
      const u = Float64Array.from({ length: n }, () => Math.floor(rnd() * 200));
      const range = acfRange(Float64Array.from({ length: n }, (_, g) => g), 0);
      const acc = makeAcfSums(1, range);
      addCellLagSums(acc, 0, u, 0, 1, new Float64Array(n));
      for (let k = 0; k <= range.lags; k++) {
        let sum = 0;
        for (let t = 0; t + k < n; t++) sum += u[t] * u[t + k];
        expect(acc.hi[k] * 2 ** 32 + acc.lo[k], `n ${n} lag ${k}`).toBe(sum);
      }
    }
  });
});
