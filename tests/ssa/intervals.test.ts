import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { simulateCells } from "@/ssa/ensemble";
import { computeFinalIntervals, computeStationaryIntervals } from "@/ssa/intervals";
import { compileModel } from "@/ssa/model";
import { mergePartials } from "@/ssa/stats";

const reporter = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));
const { km, gm, kp, gp } = reporter.parameters as Record<string, number>;
// Thattai & van Oudenaarden 2001: protein mean km·kp/(gm·gp) = 1000, Fano 1 + b/(1 + gp/gm) = 10.09
// with b = kp/gm, so CV = √(Fano/mean); the mRNA is Poisson, mean km/gm = 10, Fano 1.
const pMean = (km * kp) / (gm * gp);
const pFano = 1 + kp / gm / (1 + gp / gm);
const pCv = Math.sqrt(pFano / pMean);
const mMean = km / gm;

describe("95% intervals over cells: coverage on seeded ensembles of the two-stage reporter", () => {
  // Cells start at the mean (M = 10, P = 1000): in a linear network the mean then stays put, and
  // the variance relaxes at rate 2·gp (25 min); a burn-in of 200 min leaves e^-8 of it. Small
  // ensembles (40 cells × 400 min) keep 200 of them to about 200 million events.
  const start = { ...reporter, species: [{ id: "M", initial: mMean }, { id: "P", initial: pMean }] };
  const model = compileModel(start);
  const ensembles = 200;
  const cells = 40;
  const options = { method: "ssa" as const, tEnd: 600, dt: 2, burnIn: 200 };
  const hits = { mean: 0, cv: 0, fano: 0, finalMean: 0, finalFano: 0 };
  const inside = (b: [number, number], v: number) => b[0] <= v && v <= b[1];

  it(`covers the exact CV and Fano of P in 90–98% of ${ensembles} ensembles`, () => {
    for (let e = 0; e < ensembles; e++) {
      const seed = 1000 + e;
      // Two chunks merged, as a worker would: the intervals read the merged per-cell sums.
      const partial = mergePartials(simulateCells(model, { ...options, seed }, 0, cells / 2), simulateCells(model, { ...options, seed }, cells / 2, cells));
      const st = computeStationaryIntervals(partial, { seed })[1]!;
      const fi = computeFinalIntervals(partial, { seed })[1]!;
      if (inside(st.mean, pMean)) hits.mean++;
      if (inside(st.cv, pCv)) hits.cv++;
      if (inside(st.fano, pFano)) hits.fano++;
      if (inside(fi.mean, pMean)) hits.finalMean++;
      if (inside(fi.fano, pFano)) hits.finalFano++;
    }
    // Binomial(200, 0.95) has SD 1.5%: 90–98% is −3.3 to +2 SD around the nominal level.
    console.log(`coverage of ${ensembles} ensembles × ${cells} cells: ${JSON.stringify(hits)}`);
    for (const k of ["cv", "fano", "mean"] as const) {
      expect(hits[k], k).toBeGreaterThanOrEqual(0.9 * ensembles);
      expect(hits[k], k).toBeLessThanOrEqual(0.98 * ensembles);
    }
    // At the final time each cell gives one value, 40 in all: the percentile bootstrap of a
    // variance from 40 skewed values covers a little less than nominal (measured here: 93% for
    // the mean, 90.5% for the Fano factor), so the final-time band is 85–98%.
    for (const k of ["finalMean", "finalFano"] as const) {
      expect(hits[k], k).toBeGreaterThanOrEqual(0.85 * ensembles);
      expect(hits[k], k).toBeLessThanOrEqual(0.98 * ensembles);
    }
  }, 600_000);
});

describe("interval mechanics", () => {
  const model = compileModel(reporter);
  const o = { method: "ssa" as const, tEnd: 300, dt: 1, seed: 5, burnIn: 100 };

  it("intervals are the same bits for any chunking of the cells", () => {
    const whole = simulateCells(model, o, 0, 30);
    const split = mergePartials(simulateCells(model, o, 20, 30), mergePartials(simulateCells(model, o, 0, 7), simulateCells(model, o, 7, 20)));
    expect(computeStationaryIntervals(split, { seed: 5 })).toEqual(computeStationaryIntervals(whole, { seed: 5 }));
    expect(computeFinalIntervals(split, { seed: 5 })).toEqual(computeFinalIntervals(whole, { seed: 5 }));
  });

  it("model units divide mean and SD by Ω and Fano once, and leave CV alone", () => {
    const p = simulateCells(model, o, 0, 30);
    const a = computeStationaryIntervals(p, { seed: 5 })[1]!;
    const b = computeStationaryIntervals(p, { seed: 5, scale: 4 })[1]!;
    expect(b.mean).toEqual([a.mean[0] / 4, a.mean[1] / 4]);
    expect(b.fano).toEqual([a.fano[0] / 4, a.fano[1] / 4]);
    expect(b.cv).toEqual(a.cv);
  });

  it("one cell has nothing to resample: every bound is NaN (null in JSON)", () => {
    const p = simulateCells(model, o, 0, 1);
    expect(computeStationaryIntervals(p, { seed: 5 })[1]!.cv).toEqual([NaN, NaN]);
    expect(computeFinalIntervals(p, { seed: 5 })[1]!.fano).toEqual([NaN, NaN]);
  });
});
