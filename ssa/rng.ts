/**
 * One random stream per cell, derived from (run seed, cell index) only (SCIENCE.md "Seeds").
 * The stream is seedrandom's Tyche-i generator (Neves & Araujo 2011, "Fast and small nonlinear
 * pseudorandom number generators for computer simulation"), chosen by measurement (ssa/README.md,
 * "Generator choice"). Its 128-bit state is keyed by seedrandom's ARC4 generator from the string
 * `burstwise:<seed>:<index>`, so neighbouring cells get unrelated states. The kernels step the
 * same state inline; tests check the stream equals `seedrandom.tychei` from that state, word for word.
 * Pure: no I/O, no Math.random.
 */
import seedrandom from "seedrandom";

/** 2^−32: turns an unsigned 32-bit word into a uniform on [0, 1). */
export const TWO_POW_M32 = 2.3283064365386963e-10;

/**
 * Tyche-i state (a, b, c, d as int32) of cell `index` in the run with seed `seed`.
 * @throws RangeError for a seed or index that is not a non-negative safe integer.
 */
export function cellRngState(seed: number, index: number): Int32Array {
  if (!Number.isSafeInteger(seed) || seed < 0) throw new RangeError(`seed must be a non-negative integer, got ${seed}`);
  if (!Number.isSafeInteger(index) || index < 0) throw new RangeError(`index must be a non-negative integer, got ${index}`);
  const key = seedrandom(`burstwise:${seed}:${index}`);
  const s = new Int32Array(4);
  for (let i = 0; i < 4; i++) s[i] = key.int32();
  // The all-zero state is a fixed point of Tyche-i; ARC4 yields it with probability 2^−128.
  if ((s[0] | s[1] | s[2] | s[3]) === 0) s[3] = 1367130551;
  return s;
}

/**
 * Uniform random numbers from a Tyche-i state held in an Int32Array [a, b, c, d], advanced in place
 * so that a kernel can continue the same stream. One step equals seedrandom's `tychei` `next()`.
 */
export class CellRng {
  readonly state: Int32Array;
  constructor(state: Int32Array) {
    if (state.length !== 4) throw new RangeError("CellRng state must hold 4 words");
    this.state = state;
  }

  /** Next 32-bit word as int32 (Tyche-i, inverted form, as in seedrandom/lib/tychei.js). */
  nextInt32(): number {
    const s = this.state;
    let a = s[0], b = s[1], c = s[2], d = s[3];
    b = (b << 25) ^ (b >>> 7) ^ c;
    c = (c - d) | 0;
    d = (d << 24) ^ (d >>> 8) ^ a;
    a = (a - b) | 0;
    b = (b << 20) ^ (b >>> 12) ^ c;
    c = (c - d) | 0;
    d = (d << 16) ^ (c >>> 16) ^ a;
    a = (a - b) | 0;
    s[0] = a;
    s[1] = b;
    s[2] = c;
    s[3] = d;
    return a;
  }

  /** Uniform on [0, 1) with 32-bit resolution, equal to seedrandom's tychei `prng()`. */
  uniform(): number {
    return (this.nextInt32() >>> 0) * TWO_POW_M32;
  }

  /** Uniform on (0, 1]: safe inside a logarithm. */
  uniformPositive(): number {
    return 1 - (this.nextInt32() >>> 0) * TWO_POW_M32;
  }
}

/**
 * Inline Tyche-i step as kernel source over local int32 variables `ra rb rc rd`; the new word is
 * in `ra` afterwards. Kept beside CellRng so the two cannot drift apart unnoticed (tests compare them).
 */
export const TYCHEI_STEP_SOURCE =
  "rb = (rb << 25) ^ (rb >>> 7) ^ rc; rc = (rc - rd) | 0; rd = (rd << 24) ^ (rd >>> 8) ^ ra; ra = (ra - rb) | 0; " +
  "rb = (rb << 20) ^ (rb >>> 12) ^ rc; rc = (rc - rd) | 0; rd = (rd << 16) ^ (rc >>> 16) ^ ra; ra = (ra - rb) | 0;";
