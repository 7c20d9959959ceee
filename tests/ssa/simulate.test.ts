import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { analyze } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";
import { simulate } from "@/ssa/simulate";

const load = (f: string) => compileModel(parseCircuit(JSON.parse(readFileSync(`examples/${f}`, "utf8"))));

describe("simulate", () => {
  it("simulate(birth–death, ode) follows (k/γ)(1 − e^(−γt)) with zero spread (closed form)", () => {
    const s = simulate(load("birth-death.circuit.json"), { method: "ode", tEnd: 50, dt: 5 });
    expect(s).toMatchObject({ method: "ode", runs: 1, units: "model", seed: null, events: 0 });
    s.times.forEach((t, g) => expect(s.mean.X?.[g]).toBeCloseTo(100 * (1 - Math.exp(-0.1 * t)), 4)); // solver rtol 1e-6
    expect(s.trace?.X).toEqual(s.mean.X);
    expect(s.sd.X?.every((v) => v === 0)).toBe(true);
    expect(s.quantiles.X?.p95).toEqual(s.mean.X);
    expect(s.final.X).toEqual({ mean: s.mean.X?.[10], variance: 0, cv: 0, fano: 0 });
    expect(s.period.X?.count).toBe(0);
  });

  it("simulate(ring timer at 10 fL, ode) reports the limit-cycle period on every species", () => {
    const s = simulate(load("ring-timer-10fL.circuit.json"), { method: "ode", tEnd: 600, dt: 0.05, units: "molecules" });
    for (const id of ["A", "B", "C"]) {
      expect(s.period[id]?.oscillating).toBe(true);
      expect(s.period[id]?.mean).toBeCloseTo(20.81, 1); // mean-field period, see tests/ssa/period.test.ts
      expect(s.period[id]?.cv).toBeLessThan(0.01);
    }
    expect(s.units).toBe("molecules");
    expect(s.amount_unit).toBe("molecules");
  });

  it("simulate(model, ssa) needs a seed and returns the requested runs", () => {
    const m = load("birth-death.circuit.json");
    expect(() => simulate(m, { method: "ssa", tEnd: 10, dt: 1 })).toThrow(RangeError);
    const s = simulate(m, { method: "ssa", tEnd: 10, dt: 1, runs: 5, seed: 1 });
    expect(s.runs).toBe(5);
    expect(s.seed).toBe(1);
  });
});

describe("parameter_info is display text only", () => {
  it("the ring timer with and without parameter_info gives byte-identical simulate output for a seed, and the same analyze", () => {
    const file = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
    const plain = parseCircuit(file);
    const noted = parseCircuit({
      ...file,
      parameter_info: { K: { unit: "nM", note: "half-repression level" }, g: { unit: "1/min" }, n: { note: "cooperativity" } },
    });
    expect(noted.parameter_info?.K?.unit).toBe("nM");
    for (const method of ["ssa", "tau", "ode"] as const) {
      const opts = { method, tEnd: 120, dt: 2, runs: 40, seed: 9001 };
      const a = simulate(compileModel(plain), opts);
      const b = simulate(compileModel(noted), opts);
      // wall-clock figures are the only fields allowed to differ between two runs
      const bytes = (s: typeof a) => JSON.stringify({ ...s, wall_s: 0, events_per_s: 0 });
      expect(bytes(b), method).toBe(bytes(a));
    }
    expect(JSON.stringify(analyze(compileModel(noted)))).toBe(JSON.stringify(analyze(compileModel(plain))));
  });
});

describe("grids", () => {
  it("an ensemble's sample times are the mean-field trace's times, also when dt does not divide t_end", () => {
    const c = parseCircuit(JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8")));
    for (const [tEnd, dt] of [[10, 0.1], [100, 7], [5, 0.3]] as const) {
      const ensemble = simulate(compileModel(c), { method: "ssa", tEnd, dt, runs: 2, seed: 1 });
      const trace = simulate(compileModel(c), { method: "ode", tEnd, dt });
      expect(ensemble.times).toEqual(trace.times);
      expect(ensemble.times[ensemble.times.length - 1]).toBe(tEnd);
      expect(ensemble.mean[c.species[0]!.id]).toHaveLength(ensemble.times.length);
    }
  });
});
