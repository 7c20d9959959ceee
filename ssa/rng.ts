/**
 * One random stream per cell, derived from (run seed, cell index) only (SCIENCE.md "Seeds").
 * The 128-bit state of cell k is keyed by seedrandom's ARC4 generator from the string
 * `burstwise:<seed>:<index>`, so neighbouring cells get unrelated states; seedrandom stays the
 * platform's seeded-streams package for that derivation. Two generators step that state:
 * - `CellRng`, seedrandom's Tyche-i (Neves & Araujo 2011, "Fast and small nonlinear pseudorandom
 *   number generators for computer simulation"), for tau-leaping and the bootstrap; tests check
 *   it equals `seedrandom.tychei` from the same state, word for word;
 * - `DirectRng`, xoshiro128+, for the direct method's event loop (engine 0.4.0 on), where the
 *   generator's cost shows; tests check it against the reference C code's words.
 * The direct method's waiting times use `exponentialOfWord`, a table-driven −ln(1 − u) about
 * three times cheaper than Math.log in V8 (ssa/README.md "Generator choice").
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
  // The all-zero state is a fixed point of Tyche-i and of xoshiro128+; ARC4 yields it with probability 2^−128.
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

/** 2^32 and ln 2, for exponentialOfWord. */
const TWO_POW_32 = 4294967296;
const LN2 = 0.6931471805599453;

/** Powers of two 2^0 … 2^31 (exact). Exported for the generated kernels, which read the same tables. */
export const POW2_TABLE: Float64Array = Float64Array.from({ length: 32 }, (_, i) => 2 ** i);
/** ln(1 + k/256) for k = 0 … 255 (Math.log once at load). */
export const LOG1P_TABLE: Float64Array = Float64Array.from({ length: 256 }, (_, k) => Math.log(1 + k / 256));

/**
 * −ln(1 − q·2^−32) for an unsigned 32-bit word q: an exponential variate of mean 1 from one word
 * (u = 1 − q·2^−32 is in (0, 1], so the result is finite). With w = 2^32 − q = 2^e·(1 + k/256)·(1 + r),
 * ln w = e·ln2 + ln(1 + k/256) + ln(1 + r), r in [0, 2^−8), the last by its Taylor series to r^5
 * (remainder below r^6/6 < 6e−16); tests check it against Math.log to within 1e−15 relative plus
 * 2e−16 absolute (a waiting time off by 2e−16 mean lifetimes).
 * The few words with w < 256 (or w = 2^32) take Math.log.
 */
export function exponentialOfWord(q: number): number {
  if (q > 4294967040 || q === 0) return -Math.log(1 - q * TWO_POW_M32);
  const w = TWO_POW_32 - q;
  const e = 31 - Math.clz32(w);
  const sh = e - 8;
  const hi = w >>> sh;
  const base = hi * POW2_TABLE[sh];
  const r = (w - base) / base;
  return (32 - e) * LN2 - LOG1P_TABLE[hi - 256] - r * (1 - r * (0.5 - r * (0.3333333333333333 - r * (0.25 - r * 0.2))));
}

/**
 * exponentialOfWord inlined as kernel source: sets `out` from the unsigned word in `word`.
 * Needs `P2` = POW2_TABLE and `LT` = LOG1P_TABLE in scope. Kept beside the function so the two
 * cannot drift apart unnoticed (tests compare them).
 */
export function exponentialSource(word: string, out: string): string {
  return (
    `if (${word} > 4294967040 || ${word} === 0) ${out} = -Math.log(1 - ${word} * ${TWO_POW_M32}); ` +
    `else { const ew = 4294967296 - ${word}, ee = 31 - Math.clz32(ew), eh = ew >>> (ee - 8), eb = eh * P2[ee - 8], er = (ew - eb) / eb; ` +
    `${out} = (32 - ee) * ${LN2} - LT[eh - 256] - er * (1 - er * (0.5 - er * (0.3333333333333333 - er * (0.25 - er * 0.2)))); }`
  );
}

/**
 * The direct method's stream: xoshiro128+ (Blackman & Vigna 2021, "Scrambled linear pseudorandom
 * number generators", ACM TOMS 47:36) over the same ARC4-keyed state [a, b, c, d] as CellRng,
 * advanced in place so that a kernel can continue it. Cheaper per word than Tyche-i (one add,
 * four xors, two shifts); its weak lowest bits do not matter since every word becomes a uniform
 * by word·2^−32. One step equals XOSHIRO_STEP_SOURCE. Used by the direct method since engine
 * 0.4.0 (ssa/version.ts); tau-leaping and the bootstrap keep CellRng (Tyche-i).
 */
export class DirectRng {
  readonly state: Int32Array;
  constructor(state: Int32Array) {
    if (state.length !== 4) throw new RangeError("DirectRng state must hold 4 words");
    this.state = state;
  }

  /** Next 32-bit word as int32 (xoshiro128+, as in Blackman & Vigna's reference xoshiro128plus.c). */
  nextInt32(): number {
    const s = this.state;
    let a = s[0], b = s[1], c = s[2], d = s[3];
    const result = (a + d) | 0;
    const t = b << 9;
    c ^= a;
    d ^= b;
    b ^= c;
    a ^= d;
    c ^= t;
    d = (d << 11) | (d >>> 21);
    s[0] = a;
    s[1] = b;
    s[2] = c;
    s[3] = d;
    return result;
  }

  /** Uniform on [0, 1) with 32-bit resolution. */
  uniform(): number {
    return (this.nextInt32() >>> 0) * TWO_POW_M32;
  }

  /** Exponential of mean 1 from one word: exponentialOfWord, the direct method's waiting time. */
  exponential(): number {
    return exponentialOfWord(this.nextInt32() >>> 0);
  }
}

/**
 * Inline xoshiro128+ step as kernel source over local int32 variables `ra rb rc rd` (state) and
 * `ru rt` (scratch); the new word is in `ru` afterwards. Kept beside DirectRng so the two cannot
 * drift apart unnoticed (tests compare them).
 */
export const XOSHIRO_STEP_SOURCE =
  "ru = (ra + rd) | 0; rt = rb << 9; rc ^= ra; rd ^= rb; rb ^= rc; ra ^= rd; rc ^= rt; rd = (rd << 11) | (rd >>> 21);";
