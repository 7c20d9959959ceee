/**
 * ssa/histogram-accumulator.ts against the sort-and-merge path it replaces (ssa/stats.ts
 * histogramsOfBlock + mergeHistograms): the same sparse histograms, value for value and count for
 * count, for counts whose range drifts from block to block, for fractions and negatives (which
 * send it to the sparse path part-way), and for a range too wide to keep dense. And the fold of a
 * run's chunks (ssa/ensemble.ts CellsFolder) against mergePartials of the same chunks: equal
 * serialized bytes, whatever order the chunks come in.
 */
import { readFileSync } from "node:fs";
import { serialize } from "node:v8";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { CellsFolder, simulateCells, type EnsembleOptions } from "@/ssa/ensemble";
import { HistogramAccumulator } from "@/ssa/histogram-accumulator";
import { compileModel } from "@/ssa/model";
import { histogramsOfBlock, mergeHistograms, mergePartials, type HistogramCSR } from "@/ssa/stats";

/** A seeded stream of blocks: nPoints × nb values each, drawn by `value(p, block, k)`. */
function blocks(nPoints: number, nb: number, count: number, value: (p: number, block: number, k: number) => number): Float64Array[] {
  return Array.from({ length: count }, (_, b) => {
    const block = new Float64Array(nPoints * nb);
    for (let p = 0; p < nPoints; p++) for (let k = 0; k < nb; k++) block[p * nb + k] = value(p, b, k);
    return block;
  });
}

/** The histograms both ways: accumulated, and sorted per block then merged (on copies: both may reorder a block). */
function bothWays(list: Float64Array[], nPoints: number, nb: number): [HistogramCSR, HistogramCSR] {
  const acc = new HistogramAccumulator(nPoints);
  let merged: HistogramCSR | null = null;
  for (const block of list) {
    acc.addBlock(Float64Array.from(block), nb, nb);
    const h = histogramsOfBlock(Float64Array.from(block), nPoints, nb, nb);
    merged = merged ? mergeHistograms(merged, h, nPoints) : h;
  }
  return [acc.toCSR(), merged as HistogramCSR];
}

const plain = (h: HistogramCSR) => [Array.from(h.histPtr), Array.from(h.histValues), Array.from(h.histCounts)];

/** Park–Miller minimal standard generator (Park & Miller 1988): a fixed, seedable stream for the test data. */
function lcg(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 16807) % 2147483647) / 2147483647;
}

describe("HistogramAccumulator", () => {
  it("equals sort-and-merge for counts whose range drifts upward, downward and widens across blocks", () => {
    const r = lcg(11);
    const list = blocks(40, 9, 12, (p, b) => Math.floor(r() * (5 + 3 * b)) + (p % 2 === 0 ? 4 * b : Math.max(0, 60 - 5 * b)));
    const [acc, merged] = bothWays(list, 40, 9);
    expect(plain(acc)).toEqual(plain(merged));
    // The counts add to the samples given: nothing lost or doubled.
    expect(Array.from(acc.histCounts).reduce((a, b) => a + b, 0)).toBe(40 * 9 * 12);
    // One block alone, and two (the first is kept sorted until the second arrives).
    for (const n of [1, 2]) {
      const [a, m] = bothWays(list.slice(0, n), 40, 9);
      expect(plain(a)).toEqual(plain(m));
    }
  });

  it("equals sort-and-merge when fractions or negatives arrive after dense blocks (it turns sparse part-way)", () => {
    const r = lcg(5);
    const fractional = blocks(7, 5, 6, (_p, b) => (b < 3 ? Math.floor(r() * 20) : Math.floor(r() * 20) + (b === 4 ? 0.5 : 0)));
    const [a1, m1] = bothWays(fractional, 7, 5);
    expect(plain(a1)).toEqual(plain(m1));
    expect(Array.from(a1.histValues).some((v) => v % 1 === 0.5)).toBe(true);
    const negative = blocks(7, 5, 4, (_p, b) => Math.floor(r() * 20) - (b === 2 ? 30 : 0));
    const [a2, m2] = bothWays(negative, 7, 5);
    expect(plain(a2)).toEqual(plain(m2));
    expect(Math.min(...a2.histValues)).toBeLessThan(0);
  });

  it("equals sort-and-merge for a range wider than it keeps dense (0 to 200,000 molecules)", () => {
    const r = lcg(3);
    const list = blocks(3, 8, 3, () => Math.floor(r() * 200_000));
    const [acc, merged] = bothWays(list, 3, 8);
    expect(plain(acc)).toEqual(plain(merged));
  });

  it("refuses to give histograms of nothing", () => {
    expect(() => new HistogramAccumulator(4).toCSR()).toThrow(RangeError);
  });
});

describe("CellsFolder", () => {
  const ring = parseCircuit(JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8")));
  const o: EnsembleOptions = { method: "ssa", tEnd: 400, dt: 2, seed: 9, burnIn: 80, blockSize: 4 };

  it("gives the bytes of mergePartials over simulateCells of the same chunks, in whatever order they are folded", () => {
    const m = compileModel(ring);
    const chunks: [number, number][] = [[0, 6], [6, 7], [7, 19], [19, 30], [30, 31]];
    const merged = chunks.map(([a, b]) => simulateCells(m, o, a, b)).reduce((x, y) => mergePartials(x, y));
    const want = serialize(merged);
    for (const order of [[0, 1, 2, 3, 4], [4, 2, 0, 3, 1], [3, 4, 1, 0, 2]]) {
      const folder = new CellsFolder(m, o);
      for (const k of order) folder.add(...chunks[k]);
      expect(folder.cells).toBe(31);
      expect(Buffer.from(serialize(folder.result())).equals(Buffer.from(want))).toBe(true);
    }
    // A fold with a gap keeps two segments, as mergePartials does.
    const gap = new CellsFolder(m, o);
    gap.add(0, 6);
    gap.add(7, 19);
    expect(gap.result()?.segments.map((s) => [s.first, s.last])).toEqual([[0, 6], [7, 19]]);
    expect(new CellsFolder(m, o).result()).toBeNull();
  });

  it("refuses a chunk that overlaps one already folded, naming the cell", () => {
    const m = compileModel(ring);
    const folder = new CellsFolder(m, o);
    folder.add(0, 5);
    folder.add(3, 8);
    expect(() => folder.result()).toThrow(/overlap at cell 3/);
  });
});
