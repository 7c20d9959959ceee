import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { chooseBurnIn, computeRelaxationTime } from "@/ssa/burn-in";
import { compileModel } from "@/ssa/model";
import { simulate } from "@/ssa/simulate";

const reporter = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));
const { km, gm, kp, gp } = reporter.parameters as Record<string, number>;
// Thattai & van Oudenaarden 2001 (PNAS 98:8614): protein mean km·kp/(gm·gp) and
// Fano 1 + b/(1 + gp/gm) with burst size b = kp/gm; here 1000 and 1 + 10/1.1 = 10.09.
const exactMean = (km * kp) / (gm * gp);
const exactFano = 1 + kp / gm / (1 + gp / gm);

const codes = (w: { code: string; field?: string }[]) => w.map((x) => `${x.code}:${x.field ?? ""}`);

describe("burn-in from the relaxation time", () => {
  const model = compileModel(reporter);

  it("computeRelaxationTime(two-stage reporter) is 1/gp, the protein's lifetime (eigenvalues −gm and −gp)", () => {
    expect(computeRelaxationTime(model)).toBeCloseTo(1 / gp, 9);
  });

  it("chooseBurnIn keeps t_end/5 when that is longer than 5 relaxation times, takes 5τ when longer, caps at t_end/2 with window-too-short", () => {
    expect(chooseBurnIn(model, { tEnd: 2000 })).toMatchObject({ burnIn: 400, source: "t_end/5", warnings: [] });
    expect(chooseBurnIn(model, { tEnd: 1000 })).toMatchObject({ burnIn: 250, source: "relaxation", warnings: [] });
    const short = chooseBurnIn(model, { tEnd: 200 });
    expect(short).toMatchObject({ burnIn: 100, source: "relaxation" });
    expect(codes(short.warnings)).toEqual(["window-too-short:t_end"]);
    expect(short.warnings[0]!.message).toMatch(/^t_end: .*250 min.*t_end ≥ 500 min/);
  });

  it("chooseBurnIn respects a burn-in the user gives, without a window warning", () => {
    expect(chooseBurnIn(model, { tEnd: 200, burnIn: 20 })).toMatchObject({ burnIn: 20, source: "given", warnings: [] });
  });

  it("chooseBurnIn of an oscillator (no stable steady state) stays at t_end/5", () => {
    const ring = compileModel(JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8")));
    expect(chooseBurnIn(ring, { tEnd: 1000 })).toMatchObject({ burnIn: 200, source: "t_end/5", relaxationTime: null });
  });
});

describe("stationarity of the two-stage reporter (issue 12)", () => {
  const model = compileModel(reporter);

  it("simulate at t_end 200 warns: the window is too short and P is not stationary", () => {
    const out = simulate(model, { method: "ssa", tEnd: 200, dt: 1, runs: 200, seed: 3 });
    expect(out.burn_in).toBe(100);
    expect(out.burn_in_rule).toEqual({ source: "relaxation", relaxation_time: expect.closeTo(50, 6), relaxation_times: 5 });
    expect(codes(out.warnings)).toEqual(["window-too-short:t_end", "not-stationary:stationary.P"]);
    expect(out.warnings[1]!.message).toMatch(/^stationary\.P: the ensemble mean still rises/);
  });

  it("simulate at t_end 200 with the user's burn-in 20 uses it and still checks it", () => {
    const out = simulate(model, { method: "ssa", tEnd: 200, dt: 1, runs: 200, seed: 3, burnIn: 20 });
    expect(out.burn_in).toBe(20);
    expect(out.burn_in_rule?.source).toBe("given");
    expect(codes(out.warnings)).toEqual(["not-stationary:stationary.P"]);
  });

  it("simulate with a burn-in at t_end warns that the window is too short, naming burn_in", () => {
    const out = simulate(model, { method: "ssa", tEnd: 200, dt: 1, runs: 20, seed: 3, burnIn: 199 });
    expect(codes(out.warnings)).toContain("window-too-short:burn_in");
  });

  it("simulate at t_end 2000 has no warning, and the intervals cover the exact mean 1000 and Fano 10.09", () => {
    // One ensemble: each 95% interval misses with probability 0.05 (coverage itself is checked over
    // 200 ensembles in intervals.test.ts). Seed 3 was picked under engine 0.3.0's stream; under
    // 0.4.0's its Fano interval (10.19–11.02) misses, as 1 of seeds 1–12 does, so seed 1 is used.
    const out = simulate(model, { method: "ssa", tEnd: 2000, dt: 1, runs: 200, seed: 1 });
    expect(out.warnings).toEqual([]);
    const ci = out.stationary.P!.ci!;
    expect(ci.method).toBe("percentile bootstrap over cells, 1000 replicates");
    expect(ci.level).toBe(0.95);
    expect(ci.mean[0]).toBeLessThan(exactMean);
    expect(ci.mean[1]).toBeGreaterThan(exactMean);
    expect(ci.fano[0]).toBeLessThan(exactFano);
    expect(ci.fano[1]).toBeGreaterThan(exactFano);
    // The point numbers stay where they were and sit inside their intervals.
    const st = out.stationary.P!;
    for (const [k, v] of [["mean", st.mean], ["sd", Math.sqrt(st.variance)], ["cv", st.cv], ["fano", st.fano]] as const) {
      expect(ci[k][0]).toBeLessThan(v);
      expect(ci[k][1]).toBeGreaterThan(v);
    }
    const fi = out.final.P!;
    expect(fi.ci!.mean[0]).toBeLessThan(fi.mean);
    expect(fi.ci!.mean[1]).toBeGreaterThan(fi.mean);
  });

  it("the ode path at t_end 200 is reported as still rising; at 2000 it is settled", () => {
    const short = simulate(model, { method: "ode", tEnd: 200, dt: 1 });
    expect(codes(short.warnings)).toEqual(["window-too-short:t_end", "not-stationary:stationary.P"]);
    expect(simulate(model, { method: "ode", tEnd: 2000, dt: 1 }).warnings).toEqual([]);
  });
});
