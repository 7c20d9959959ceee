import seedrandom from "seedrandom";
import { describe, expect, it } from "vitest";

import { CellRng, cellRngState } from "@/ssa/rng";

describe("per-cell streams", () => {
  it("CellRng continues seedrandom's tychei stream word for word from the same state", () => {
    const state = cellRngState(42, 7);
    const reference = seedrandom.tychei("", { state: { a: state[0], b: state[1], c: state[2], d: state[3] } });
    const ours = new CellRng(state.slice());
    for (let k = 0; k < 10_000; k++) expect(ours.uniform()).toBe(reference());
  });

  it("cellRngState(seed, index) depends only on (seed, index), and neighbours differ", () => {
    expect(Array.from(cellRngState(42, 7))).toEqual(Array.from(cellRngState(42, 7)));
    const seen = new Set<string>();
    for (let s = 0; s < 20; s++) for (let i = 0; i < 50; i++) seen.add(Array.from(cellRngState(s, i)).join(","));
    expect(seen.size).toBe(1000);
    // "1:23" and "12:3" must not collide
    expect(Array.from(cellRngState(1, 23))).not.toEqual(Array.from(cellRngState(12, 3)));
  });

  it("cellRngState rejects seeds and indices that are not non-negative safe integers", () => {
    expect(() => cellRngState(-1, 0)).toThrow(RangeError);
    expect(() => cellRngState(1.5, 0)).toThrow(RangeError);
    expect(() => cellRngState(1, 2 ** 60)).toThrow(RangeError);
  });

  it("uniform() has mean 1/2 and variance 1/12 within 4 standard errors, and uniformPositive() is never 0", () => {
    const r = new CellRng(cellRngState(3, 0));
    const n = 200_000;
    let s = 0;
    let s2 = 0;
    let minPos = 1;
    for (let k = 0; k < n; k++) {
      const u = r.uniform();
      s += u;
      s2 += u * u;
      minPos = Math.min(minPos, r.uniformPositive());
    }
    const mean = s / n;
    const variance = s2 / n - mean * mean;
    expect(Math.abs(mean - 0.5) / Math.sqrt(1 / 12 / n)).toBeLessThan(4); // textbook uniform moments
    expect(Math.abs(variance - 1 / 12) / Math.sqrt(1 / 180 / n)).toBeLessThan(4); // Var(U²−…) = 1/180
    expect(minPos).toBeGreaterThan(0);
  });
});
