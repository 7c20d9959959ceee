/**
 * Periods of the ring timer (CONTRACT.md example) against the mean-field limit cycle, and the
 * verdict (ssa/oscillation.ts) that keeps non-oscillating species at count 0.
 */
import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateEnsemble } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { solveOde } from "@/ssa/ode";

const load = (f: string) => parseCircuit(JSON.parse(readFileSync(`examples/${f}`, "utf8")));

/** Limit-cycle period of a deterministic path: mean spacing of upward crossings of its mid-range, second half only. */
function odePeriod(times: number[], y: number[]): number {
  const h = Math.floor(y.length / 2);
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = h; k < y.length; k++) {
    lo = Math.min(lo, y[k] as number);
    hi = Math.max(hi, y[k] as number);
  }
  const mid = (lo + hi) / 2;
  const crossings: number[] = [];
  for (let k = h + 1; k < y.length; k++) {
    const a = y[k - 1] as number;
    const b = y[k] as number;
    if (a < mid && b >= mid) crossings.push((times[k - 1] as number) + ((times[k] as number) - (times[k - 1] as number)) * ((mid - a) / (b - a)));
  }
  return ((crossings[crossings.length - 1] as number) - (crossings[0] as number)) / (crossings.length - 1);
}

describe("periods", () => {
  it("the ring timer at 10 fL has a mean period within 2% of the mean-field limit cycle's (issue 3; ODE by Dormand–Prince)", () => {
    const c = load("ring-timer-10fL.circuit.json");
    const m = compileModel(c);
    const sol = solveOde(m, { tEnd: 1500, dt: 0.01, rtol: 1e-10, atol: 1e-12 });
    const T = odePeriod(sol.times, sol.trace.A as number[]);
    expect(T).toBeGreaterThan(15);
    expect(T).toBeLessThan(30);
    for (const id of ["B", "C"]) expect(Math.abs(odePeriod(sol.times, sol.trace[id] as number[]) - T)).toBeLessThan(1e-3);
    const s = simulateEnsemble(m, { method: "ssa", tEnd: 1500, dt: 0.5, seed: 8 }, 24);
    for (const id of m.species) {
      const p = s.period[id];
      expect(p?.oscillating).toBe(true);
      expect(p?.count).toBeGreaterThan(1000);
      expect(Math.abs((p?.mean as number) - T) / T).toBeLessThan(0.02);
      expect(p?.histogram.counts.reduce((a, b) => a + b, 0)).toBe(p?.count);
      expect(p?.amplitude.mean).toBeGreaterThan(0);
    }
  });

  it("birth–death and the two-stage reporter do not oscillate: period count 0 for every species", () => {
    for (const f of ["birth-death.circuit.json", "two-stage-reporter.circuit.json"]) {
      const m = compileModel(load(f));
      const s = simulateEnsemble(m, { method: "ssa", tEnd: 1000, dt: 1, seed: 2 }, 30);
      for (const id of m.species) {
        expect(s.period[id]?.count).toBe(0);
        expect(s.period[id]?.crossings.count).toBeGreaterThan(0);
      }
    }
  });
});
