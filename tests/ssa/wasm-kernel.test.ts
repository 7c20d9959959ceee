/**
 * The WebAssembly direct-method kernel (ssa/wasm-kernel.ts) against the generated JS kernel
 * (ssa/kernel.ts compileDirectKernel): the same samples, event counts, final counts and generator
 * state, bit for bit, for every circuit it accepts, several seeds, a 10-unit and a 1-unit grid,
 * strided output, a maxEvents stop and the replay of a cell whose counts leave int32 room. The
 * JS kernel is itself checked against exact results (tests/ssa/direct.test.ts), so equality here
 * carries those checks over to the wasm kernel.
 */
import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { kernelFor, makeGrid, simulateCells, type EnsembleOptions } from "@/ssa/ensemble";
import { MAX_KERNEL_COUNT, compileDirectKernel, hillTable } from "@/ssa/kernel";
import { compileModel } from "@/ssa/model";
import { LawCode, type Model } from "@/ssa/model-core";
import { cellRngState } from "@/ssa/rng";
import type { Circuit } from "@/ssa/types";
import { canCompileWasmKernel, compileWasmKernel, wasmKernelRefusal } from "@/ssa/wasm-kernel";

const example = (name: string): Circuit => parseCircuit(JSON.parse(readFileSync(`examples/${name}.circuit.json`, "utf8")));
const circuit = (c: Omit<Circuit, "format">): Circuit => parseCircuit({ format: "burstwise.circuit/1", ...c });

/** 2A ⇌ D with A made and lost: mass action with ν = 2 (propensity c·A(A−1)/2). */
const dimerisation = circuit({
  units: { time: "min", amount: "molecules" },
  species: [
    { id: "A", initial: 10 },
    { id: "D", initial: 0 },
  ],
  parameters: { k: 20, g: 0.1, kf: 0.01, kr: 0.5 },
  reactions: [
    { id: "make", products: { A: 1 }, rate: { law: "mass_action", k: "k" } },
    { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
    { id: "bind", reactants: { A: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: "kf" } },
    { id: "unbind", reactants: { D: 1 }, products: { A: 2 }, rate: { law: "mass_action", k: "kr" } },
  ],
});

/** A Hill activator whose input X sits near 2,000 while its table covers 0..800 (40·K): the formula path beyond. */
const hillBeyondTable = circuit({
  units: { time: "min", amount: "molecules" },
  species: [
    { id: "X", initial: 1500 },
    { id: "Y", initial: 0 },
  ],
  parameters: { k: 200, g: 0.1, vmax: 50, K: 20, n: 2, gy: 0.5 },
  reactions: [
    { id: "make_X", products: { X: 1 }, rate: { law: "mass_action", k: "k" } },
    { id: "lose_X", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
    { id: "make_Y", products: { Y: 1 }, rate: { law: "hill_activation", input: "X", vmax: "vmax", K: "K", n: "n" } },
    { id: "lose_Y", reactants: { Y: 1 }, rate: { law: "mass_action", k: "gy" } },
  ],
});

const CIRCUITS: { name: string; c: Circuit; tEnd: number }[] = [
  { name: "ring timer", c: example("ring-timer"), tEnd: 2000 },
  { name: "two-stage reporter", c: example("two-stage-reporter"), tEnd: 1000 },
  { name: "birth-death", c: example("birth-death"), tEnd: 1000 },
  { name: "goodwin", c: example("goodwin"), tEnd: 20 },
  { name: "dimerisation", c: dimerisation, tEnd: 500 },
  { name: "Hill input beyond the table", c: hillBeyondTable, tEnd: 200 },
];

const SEEDS = [1, 7, 20261204];

function sentinelGrid(tEnd: number, dt: number): Float64Array {
  const g = makeGrid(tEnd, dt);
  const s = new Float64Array(g.length + 1);
  s.set(g);
  s[g.length] = Infinity;
  return s;
}

interface CellRun {
  events: number;
  out: Float64Array;
  x: Float64Array;
  rs: Int32Array;
}

/** One cell through a kernel, samples at out[o + (g·nS + i)·B] of a fresh array (unwritten slots NaN). */
function runCell(k: ReturnType<typeof compileDirectKernel>, m: Model, seed: number, cell: number, grid: Float64Array, o = 0, B = 1, maxEvents = 2e9, x0?: Float64Array): CellRun {
  const nT = grid.length - 1;
  const out = new Float64Array(o + nT * m.nSpecies * B).fill(NaN);
  const x = Float64Array.from(x0 ?? m.initialCounts);
  const rs = cellRngState(seed, cell);
  const events = k(x, rs, grid, nT, out, o, B, maxEvents);
  return { events, out, x, rs };
}

/** Bitwise equality of two Float64Arrays (NaN equals NaN, +0 differs from −0). */
function sameBits(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  const ua = new Uint32Array(a.buffer, a.byteOffset, a.length * 2);
  const ub = new Uint32Array(b.buffer, b.byteOffset, b.length * 2);
  for (let k = 0; k < ua.length; k++) if (ua[k] !== ub[k]) return false;
  return true;
}

describe("wasm direct-method kernel", () => {
  for (const { name, c, tEnd } of CIRCUITS) {
    it(`${name}: the same samples, events, final counts and generator state as the generated JS kernel, on 10- and 1-unit grids`, () => {
      const m = compileModel(c);
      expect(wasmKernelRefusal(m)).toBeNull();
      const js = compileDirectKernel(m);
      const wasm = compileWasmKernel(m);
      for (const dt of [10, 1]) {
        const grid = sentinelGrid(tEnd, dt);
        for (const seed of SEEDS) {
          for (const cell of [0, 3]) {
            const a = runCell(js, m, seed, cell, grid);
            const b = runCell(wasm, m, seed, cell, grid);
            expect(a.events).toBeGreaterThan(0);
            expect(b.events).toBe(a.events);
            expect(sameBits(b.out, a.out)).toBe(true);
            expect(Array.from(b.x)).toEqual(Array.from(a.x));
            expect(Array.from(b.rs)).toEqual(Array.from(a.rs));
          }
        }
      }
    });
  }

  it("the Hill circuit really reads counts beyond its table (the imported formula path)", () => {
    const m = compileModel(hillBeyondTable);
    const j = Array.from(m.law).indexOf(LawCode.HillActivation);
    const size = hillTable(m, j).length;
    const r = runCell(compileWasmKernel(m), m, 1, 0, sentinelGrid(200, 10));
    const xs = Array.from(r.out.filter((_, k) => k % m.nSpecies === m.hillInput[j]));
    expect(Math.max(...xs)).toBeGreaterThan(size);
  });

  it("writes with the caller's offset and stride into a plain array (the copy path), as the JS kernel does", () => {
    const m = compileModel(example("ring-timer"));
    const grid = sentinelGrid(500, 1);
    const a = runCell(compileDirectKernel(m), m, 3, 5, grid, 2, 4);
    const b = runCell(compileWasmKernel(m), m, 3, 5, grid, 2, 4);
    expect(b.events).toBe(a.events);
    expect(sameBits(b.out, a.out)).toBe(true);
  });

  it("refuses a sample array too small for the grid, or one detached by memory growth, instead of writing nowhere", () => {
    const m = compileModel(example("birth-death"));
    const k = compileWasmKernel(m);
    const small = sentinelGrid(100, 10);
    const block = k.block(small.length - 1, small.length) as Float64Array;
    expect(block).not.toBeNull();
    expect(k(Float64Array.from(m.initialCounts), cellRngState(1, 0), small, small.length - 1, block, 0, 1, 2e9)).toBeGreaterThan(0);
    // A grid far larger than the room reserved makes the memory grow: the old view is detached.
    const big = sentinelGrid(1e6, 1);
    expect(() => k(Float64Array.from(m.initialCounts), cellRngState(1, 0), big, big.length - 1, block, 0, 1, 2e9)).toThrow(/too small/);
    expect(() => k(Float64Array.from(m.initialCounts), cellRngState(1, 0), small, small.length - 1, new Float64Array(3), 0, 1, 2e9)).toThrow(/too small/);
  });

  it("stops at maxEvents with −1, the same samples so far, final counts and generator state", () => {
    const m = compileModel(example("ring-timer"));
    const grid = sentinelGrid(2000, 1);
    for (const maxEvents of [0, 1, 999, 25000]) {
      const a = runCell(compileDirectKernel(m), m, 11, 0, grid, 0, 1, maxEvents);
      const b = runCell(compileWasmKernel(m), m, 11, 0, grid, 0, 1, maxEvents);
      expect(a.events).toBe(-1);
      expect(b.events).toBe(-1);
      expect(sameBits(b.out, a.out)).toBe(true);
      expect(Array.from(b.x)).toEqual(Array.from(a.x));
      expect(Array.from(b.rs)).toEqual(Array.from(a.rs));
    }
  });

  it("a cell whose count leaves [0, 2^30] is replayed by the JS kernel: still the same bytes", () => {
    // Fast production from just below 2^30: the count crosses the int32 guard within the run.
    const c = circuit({
      units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: MAX_KERNEL_COUNT - 50 }],
      parameters: { k: 100 },
      reactions: [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }],
    });
    const m = compileModel(c);
    const grid = sentinelGrid(10, 1);
    const a = runCell(compileDirectKernel(m), m, 2, 0, grid);
    const b = runCell(compileWasmKernel(m), m, 2, 0, grid);
    expect(a.x[0]).toBeGreaterThan(MAX_KERNEL_COUNT);
    expect(b.events).toBe(a.events);
    expect(sameBits(b.out, a.out)).toBe(true);
    expect(Array.from(b.x)).toEqual(Array.from(a.x));
  });

  it("simulateCells gives identical partials with the wasm kernel (its own sample block) and the generated one", () => {
    for (const c of [example("ring-timer"), dimerisation]) {
      for (const dt of [10, 1]) {
        const o: EnsembleOptions = { method: "ssa", tEnd: 1000, dt, seed: 5, blockSize: 7 };
        const w = simulateCells(compileModel(c), { ...o, kernel: "wasm" }, 3, 20);
        const g = simulateCells(compileModel(c), { ...o, kernel: "generated" }, 3, 20);
        expect(w.events).toBe(g.events);
        expect(w).toEqual(g);
      }
    }
  });

  it("kernelFor picks the wasm kernel by default, the JS kernel for formula rates or when asked", () => {
    const m = compileModel(example("ring-timer"));
    expect(canCompileWasmKernel(m)).toBe(true);
    expect(typeof kernelFor(m, { method: "ssa" }).block).toBe("function");
    expect(kernelFor(m, { method: "ssa", kernel: "generated" }).block).toBeUndefined();
    const formula = compileModel(
      circuit({
        units: { time: "min", amount: "molecules" },
        species: [{ id: "X", initial: 0 }],
        parameters: { k: 10, g: 0.1 },
        reactions: [
          { id: "make", products: { X: 1 }, rate: { law: "expression", expression: "k" } },
          { id: "lose", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } },
        ],
      }),
    );
    expect(canCompileWasmKernel(formula)).toBe(false);
    expect(wasmKernelRefusal(formula)).toMatch(/formula rate/);
    expect(kernelFor(formula, { method: "ssa" }).block).toBeUndefined();
    expect(() => compileWasmKernel(formula)).toThrow(/formula rate/);
  });
});
