import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { EVENTS_PER_S_PER_THREAD, costPerCell, countGridPoints, estimateRunCost, formatCellEvents } from "@/lib/view/run-cost";
import type { Circuit } from "@/ssa/types";

const birthDeath = JSON.parse(readFileSync("examples/birth-death.circuit.json", "utf8")) as Circuit;
const ringTimer = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8")) as Circuit;

describe("estimateRunCost", () => {
  it("estimateRunCost(birth–death) matches the exact expected event count 2kT − (k/g)(1 − e^(−gT)) (worked by hand)", () => {
    // a₀ = k + g·x and E[x(t)] = (k/g)(1 − e^(−gt)) from x(0) = 0; the propensities are linear, so
    // the mean-field integral is the exact expectation. Trapezoid on 2000 points: relative error ~1e-6.
    const k = 10, g = 0.1, T = 200;
    const exact = 2 * k * T - (k / g) * (1 - Math.exp(-g * T));
    const est = estimateRunCost(birthDeath, { method: "ssa", tEnd: T, cells: 100 });
    expect(est.basis).toBe("mean-field path");
    expect(Math.abs(est.eventsPerCell - exact) / exact).toBeLessThan(1e-4);
    expect(est.totalEvents).toBeCloseTo(100 * est.eventsPerCell, 6);
    expect(est.threadSeconds).toBeCloseTo(est.totalEvents / EVENTS_PER_S_PER_THREAD, 12);
  });

  it("estimateRunCost(birth–death, overrides) uses the overridden rate: doubling k doubles the events", () => {
    const a = estimateRunCost(birthDeath, { method: "ssa", tEnd: 100, cells: 1 });
    const b = estimateRunCost(birthDeath, { method: "tau", tEnd: 100, cells: 1, overrides: { k: 20 } });
    expect(b.eventsPerCell / a.eventsPerCell).toBeCloseTo(2, 4);
  });

  it("estimateRunCost(trace) costs no reaction events", () => {
    expect(estimateRunCost(ringTimer, { method: "ode", tEnd: 200, cells: 1 })).toMatchObject({ eventsPerCell: 0, basis: "trace" });
  });

  it("estimateRunCost(ring timer) is positive and below the ceiling set by the largest production rates", () => {
    // Loss events alone are g·Σx and production is at most Σvmax·Ω per minute, so over T minutes
    // events ≤ 2·3·vmax·Ω·T (every made molecule can also be lost); and the estimate must be > 0.
    const omega = 0.6022140760; // 1 nM in 1 fL
    const T = 200;
    const est = estimateRunCost(ringTimer, { method: "ssa", tEnd: T, cells: 1 });
    expect(est.eventsPerCell).toBeGreaterThan(0);
    expect(est.eventsPerCell).toBeLessThanOrEqual(2 * 3 * 40 * omega * T);
  });

  it("estimateRunCost(circuit, unknown override) throws naming the override", () => {
    expect(() => estimateRunCost(birthDeath, { method: "ssa", tEnd: 10, cells: 1, overrides: { kx: 1 } })).toThrow(/overrides\.kx/);
  });
});

describe("the queue's cost of a cell", () => {
  it("costPerCell(events, grid) adds one per grid point and caps events at the engine's 1e8 per cell (worked by hand)", () => {
    expect(costPerCell(6327, countGridPoints(200, 1))).toBe(6327 + 201);
    expect(costPerCell(5e9, 11)).toBe(1e8 + 11);
    expect(costPerCell(Number.POSITIVE_INFINITY, 11)).toBe(1e8 + 11);
    expect(costPerCell(0, countGridPoints(10, 3))).toBe(5); // 0, 3, 6, 9 and t_end itself
  });

  it("estimateRunCost(ring timer, maxOdeSize below its size) falls back to the initial state", () => {
    expect(estimateRunCost(ringTimer, { method: "ssa", tEnd: 100, cells: 1, maxOdeSize: 1 }).basis).toBe("initial state");
    expect(estimateRunCost(ringTimer, { method: "ssa", tEnd: 100, cells: 1, maxOdeSize: 1e6 }).basis).toBe("mean-field path");
  });

  it("formatCellEvents(n) names the size in words with three significant digits", () => {
    expect(formatCellEvents(2e9)).toBe("2 billion");
    expect(formatCellEvents(652_800)).toBe("653 thousand");
    expect(formatCellEvents(1_234_567_890_123)).toBe("1.23 trillion");
    expect(formatCellEvents(999)).toBe("999");
  });
});
