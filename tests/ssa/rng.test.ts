import seedrandom from "seedrandom";
import { describe, expect, it } from "vitest";

import { CellRng, cellRngState, DirectRng, exponentialOfWord, exponentialSource, LOG1P_TABLE, POW2_TABLE, XOSHIRO_STEP_SOURCE } from "@/ssa/rng";

describe("per-cell streams", () => {
  it("CellRng continues seedrandom's tychei stream word for word from the same state", () => {
    const state = cellRngState(42, 7);
    const reference = seedrandom.tychei("", { state: { a: state[0], b: state[1], c: state[2], d: state[3] } });
    const ours = new CellRng(state.slice());
    for (let k = 0; k < 10_000; k++) expect(ours.uniform()).toBe(reference());
  });

  it("DirectRng is xoshiro128+: the words of Blackman & Vigna's reference xoshiro128plus.c from two states", () => {
    // Vectors printed by the reference C code (compiled here once with gcc), from {1, 2, 3, 4}
    // and, after 1,000 steps, from {0x9E3779B9, 0xDEADBEEF, 0x01234567, 0xFEDCBA98}.
    const a = new DirectRng(Int32Array.from([1, 2, 3, 4]));
    expect(Array.from({ length: 8 }, () => a.nextInt32() >>> 0)).toEqual([5, 12295, 25178119, 27286542, 39879690, 1140358681, 3276312097, 4110231701]);
    const b = new DirectRng(Int32Array.from([0x9e3779b9 | 0, 0xdeadbeef | 0, 0x01234567, 0xfedcba98 | 0]));
    for (let k = 0; k < 1000; k++) b.nextInt32();
    expect(Array.from({ length: 4 }, () => b.nextInt32() >>> 0)).toEqual([1480305722, 2273355202, 1175898766, 1914700478]);
  });

  it("the direct kernel's inline step (XOSHIRO_STEP_SOURCE) continues DirectRng's stream word for word", () => {
    const state = cellRngState(42, 7);
    const step = new Function("s", "n", `let ra = s[0] | 0, rb = s[1] | 0, rc = s[2] | 0, rd = s[3] | 0, ru = 0, rt = 0; const out = []; for (let k = 0; k < n; k++) { ${XOSHIRO_STEP_SOURCE} out.push(ru); } return out;`) as (s: Int32Array, n: number) => number[];
    const ours = new DirectRng(state.slice());
    const words = step(state.slice(), 10_000);
    for (let k = 0; k < words.length; k++) expect(words[k]).toBe(ours.nextInt32());
  });

  it("exponentialOfWord(q) is −ln(1 − q·2^−32) to within 1e−15 relative plus 2e−16 absolute (edges, every 2^k, and 200,000 random words), and its inline source agrees bit for bit", () => {
    const inline = new Function("P2", "LT", "q", `let ex = 0; ${exponentialSource("q", "ex")} return ex;`) as (p2: Float64Array, lt: Float64Array, q: number) => number;
    const words: number[] = [0, 1, 2, 255, 256, 257, 4294967040, 4294967041, 4294967295, 2 ** 31, 2 ** 31 - 1, 2 ** 31 + 1];
    for (let k = 0; k < 32; k++) words.push(2 ** k, 2 ** 32 - 2 ** k);
    const r = new DirectRng(cellRngState(9, 9));
    for (let k = 0; k < 200_000; k++) words.push(r.nextInt32() >>> 0);
    for (const q of words) {
      const exact = -Math.log(1 - q * 2 ** -32);
      const ours = exponentialOfWord(q);
      expect(Math.abs(ours - exact), `q = ${q}`).toBeLessThanOrEqual(1e-15 * exact + 2e-16);
      expect(inline(POW2_TABLE, LOG1P_TABLE, q)).toBe(ours);
    }
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
