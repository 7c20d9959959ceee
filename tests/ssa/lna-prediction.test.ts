import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { analyze } from "@/ssa/analyze";
import { predictLna } from "@/ssa/lna-prediction";
import { compileModel } from "@/ssa/model";
import type { Circuit } from "@/ssa/types";

const load = (name: string) => JSON.parse(readFileSync(`examples/${name}.circuit.json`, "utf8")) as Circuit;

describe("predictLna (the one LNA of the comparisons and the run page)", () => {
  it("gives exactly analyze()'s LNA of the circuit with the overrides", () => {
    const reporter = load("two-stage-reporter");
    const overrides = { km: 2 * Number(reporter.parameters?.km) };
    const p = predictLna(reporter, overrides);
    expect(p.stable).toBe(true);
    expect(p.note).toBeNull();
    expect(p.lna).toEqual(analyze(compileModel(reporter, overrides)).lna);
    // Doubling transcription changes the prediction (the overrides are applied).
    expect(p.lna!.cv).not.toEqual(predictLna(reporter).lna!.cv);
  });

  it("has no LNA past a Hopf bifurcation, and says so (the ring timer oscillates)", () => {
    const p = predictLna(load("ring-timer"));
    expect(p.stable).toBe(false);
    expect(p.lna).toBeNull();
    expect(p.note).toMatch(/oscillatory.*does not apply/);
  });

  it("never throws: an unknown override is an error in words", () => {
    const p = predictLna(load("two-stage-reporter"), { nope: 1 });
    expect(p.lna).toBeNull();
    expect(p.error).toBeTruthy();
    expect(p.note).toBe(`no LNA: ${p.error}`);
  });
});
