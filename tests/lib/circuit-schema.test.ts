/**
 * Every rule of the circuit file (CONTRACT.md §1) rejects a bad file with a message that names the
 * field and the reason; values worked out by hand.
 */
import { describe, expect, it } from "vitest";

import { checkOverrides, CircuitError, describeIssue, parseCircuit } from "@/lib/schemas/circuit";
import { CliRunOptions, RunLaunch, toEngineOptions } from "@/lib/schemas/run-options";

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- the tests edit raw JSON into every wrong shape
type Json = any;

const good = (): Json => ({
  format: "burstwise.circuit/1",
  name: "Ring timer, design R2",
  units: { time: "min", amount: "nM" },
  volume_fL: 1.0,
  species: [
    { id: "A", initial: 0 },
    { id: "B", initial: 0 },
    { id: "C", initial: 0 },
  ],
  parameters: { vA: 40, vB: 40, vC: 40, K: 20, n: 4, g: 0.2 },
  reactions: [
    { id: "make_A", products: { A: 1 }, rate: { law: "hill_repression", input: "C", vmax: "vA", K: "K", n: "n" } },
    { id: "make_B", products: { B: 1 }, rate: { law: "hill_activation", input: "A", vmax: "vB", K: "K", n: "n" } },
    { id: "make_C", products: { C: 1 }, rate: { law: "hill_activation", input: "B", vmax: "vC", K: "K", n: "n" } },
    { id: "lose_A", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
    { id: "lose_B", reactants: { B: 1 }, rate: { law: "mass_action", k: "g" } },
    { id: "lose_C", reactants: { C: 1 }, rate: { law: "mass_action", k: "g" } },
  ],
});

function firstIssue(edit: (c: Json) => void): string {
  const c = good();
  edit(c);
  try {
    parseCircuit(c);
  } catch (e) {
    expect(e).toBeInstanceOf(CircuitError);
    return (e as CircuitError).message;
  }
  throw new Error("parseCircuit accepted the file");
}

describe("parseCircuit", () => {
  it("accepts the CONTRACT.md ring timer and a molecules circuit without a volume", () => {
    expect(parseCircuit(good()).reactions).toHaveLength(6);
    expect(() => parseCircuit({ ...good(), units: { time: "s", amount: "molecules" }, volume_fL: undefined })).not.toThrow();
  });

  it.each<[string, (c: Json) => void, string]>([
    ["format tag", (c) => (c.format = "burstwise.circuit/3"), 'format: must be "burstwise.circuit/1" or "burstwise.circuit/2"'],
    ["time unit", (c) => (c.units.time = "day"), 'units.time: must be "s", "min" or "h"'],
    ["amount unit", (c) => (c.units.amount = "mM"), 'units.amount: must be "nM", "uM" or "molecules"'],
    ["missing units", (c) => delete c.units, "units: is required"],
    ["volume required for a concentration", (c) => delete c.volume_fL, 'volume_fL: is required when units.amount is "nM"'],
    ["volume positive", (c) => (c.volume_fL = 0), "volume_fL: must be > 0"],
    ["volume a number", (c) => (c.volume_fL = "1"), "volume_fL: must be a finite number"],
    ["no species", (c) => (c.species = []), "species: must list at least one species"],
    ["duplicate species", (c) => (c.species[2].id = "A"), 'species[2].id: duplicate species id "A"'],
    ["species id identifier", (c) => (c.species[1].id = "2B"), "species[1].id: must be a valid identifier"],
    ["initial >= 0", (c) => (c.species[0].initial = -1), "species[0].initial: must be >= 0"],
    ["initial finite", (c) => (c.species[0].initial = "lots"), "species[0].initial: must be a finite number"],
    ["initial required", (c) => delete c.species[0].initial, "species[0].initial: is required"],
    ["unknown species key", (c) => (c.species[0].amount = 3), 'species[0]: Unrecognized key: "amount"'],
    ["parameter value", (c) => (c.parameters.g = "fast"), "parameters.g: must be a finite number"],
    ["parameter name", (c) => (c.parameters["1k"] = 1), "parameters.1k: must be a valid identifier"],
    ["parameter shadows species", (c) => (c.parameters.A = 1), 'parameters.A: name already used by species "A"'],
    ["duplicate reaction", (c) => (c.reactions[4].id = "lose_A"), 'reactions[4].id: duplicate reaction id "lose_A"'],
    ["stoichiometry positive integer", (c) => (c.reactions[3].reactants = { A: 1.5 }), "reactions[3].reactants.A: must be a positive integer"],
    ["stoichiometry zero", (c) => (c.reactions[3].reactants = { A: 0 }), "reactions[3].reactants.A: must be a positive integer"],
    ["stoichiometry species", (c) => (c.reactions[0].products = { D: 1 }), 'reactions[0].products.D: unknown species "D"'],
    ["empty reaction", (c) => (c.reactions[3].reactants = {}), "reactions[3]: has neither reactants nor products"],
    ["unknown law", (c) => (c.reactions[1].rate = { law: "michaelis" }), 'reactions[1].rate.law: must be one of "mass_action", "hill_activation", "hill_repression", "expression"'],
    ["law field missing", (c) => delete c.reactions[1].rate.K, "reactions[1].rate.K: is required"],
    ["mass action k missing", (c) => delete c.reactions[3].rate.k, "reactions[3].rate.k: is required"],
    ["stray rate field", (c) => (c.reactions[3].rate.K = 2), 'reactions[3].rate: Unrecognized key: "K"'],
    ["unknown parameter", (c) => (c.reactions[3].rate = { law: "mass_action", k: "Kc" }), 'reactions[3].rate.k: unknown parameter "Kc"'],
    ["K names a parameter", (c) => (c.reactions[2].rate.K = "Kc"), 'reactions[2].rate.K: unknown parameter "Kc"'],
    ["species used as parameter", (c) => (c.reactions[2].rate.vmax = "A"), 'reactions[2].rate.vmax: "A" is a species, not a parameter'],
    ["Hill input species", (c) => (c.reactions[0].rate.input = "Z"), 'reactions[0].rate.input: unknown species "Z"'],
    ["n > 0", (c) => (c.reactions[0].rate.n = 0), "reactions[0].rate.n: must be > 0 (got 0)"],
    ["n > 0 through a parameter", (c) => (c.parameters.n = -2), 'reactions[0].rate.n: must be > 0 (parameter "n" is -2)'],
    ["K > 0", (c) => (c.reactions[1].rate.K = 0), "reactions[1].rate.K: must be > 0 (got 0)"],
    ["vmax >= 0", (c) => (c.reactions[1].rate.vmax = -3), "reactions[1].rate.vmax: must be >= 0 (got -3)"],
    ["basal >= 0", (c) => (c.reactions[1].rate.basal = -0.1), "reactions[1].rate.basal: must be >= 0 (got -0.1)"],
    ["k >= 0", (c) => (c.reactions[3].rate.k = -1), "reactions[3].rate.k: must be >= 0 (got -1)"],
    ["expression parses", (c) => (c.reactions[0].rate = { law: "expression", expression: "vA * (1 +" }), "reactions[0].rate.expression: cannot parse formula"],
    ["expression symbols", (c) => (c.reactions[0].rate = { law: "expression", expression: "vA / (1 + (C/Kq)^n)" }), 'reactions[0].rate.expression: unknown symbol "Kq" (not a species or parameter)'],
    ["expression functions", (c) => (c.reactions[0].rate = { law: "expression", expression: "sin(C)" }), 'reactions[0].rate.expression: function "sin" is not allowed (only exp, log, sqrt, min, max, pow, piecewise)'],
    ["expression operators", (c) => (c.reactions[0].rate = { law: "expression", expression: "C % 3" }), 'reactions[0].rate.expression: operator "%" is not allowed (only + - * / ^, relations < <= > >= == !=, and, or, xor, not)'],
    ["expression conditions", (c) => (c.reactions[0].rate = { law: "expression", expression: "C > 3" }), "reactions[0].rate.expression: a condition (C > 3) cannot be a rate; use piecewise(value, condition, otherwise)"],
    ["expression assignment", (c) => (c.reactions[0].rate = { law: "expression", expression: "x = 3" }), "reactions[0].rate.expression: assignment is not allowed in a rate formula"],
    ["expression implicit product", (c) => (c.reactions[0].rate = { law: "expression", expression: "2 C" }), 'reactions[0].rate.expression: implicit multiplication is not allowed; write "*"'],
    ["expression property access", (c) => (c.reactions[0].rate = { law: "expression", expression: "C.constructor" }), "reactions[0].rate.expression: property access is not allowed in a rate formula"],
    ["expression arity", (c) => (c.reactions[0].rate = { law: "expression", expression: "pow(C)" }), "reactions[0].rate.expression: pow() takes 2 arguments, got 1"],
    ["expression empty", (c) => (c.reactions[0].rate = { law: "expression", expression: " " }), "reactions[0].rate.expression: must be a non-empty formula"],
    ["not an object", (c) => Object.assign(c, { reactions: "none" }), "reactions: must be a list of reactions"],
    ["parameter_info of an undeclared parameter", (c) => (c.parameter_info = { K: { unit: "nM" }, Kc: { unit: "nM" } }), 'parameter_info.Kc: unknown parameter "Kc"'],
    ["parameter_info unit length", (c) => (c.parameter_info = { K: { unit: "x".repeat(41) } }), "parameter_info.K.unit: must be at most 40 characters"],
    ["parameter_info note length", (c) => (c.parameter_info = { g: { note: "y".repeat(501) } }), "parameter_info.g.note: must be at most 500 characters"],
    ["parameter_info unit text", (c) => (c.parameter_info = { g: { unit: 5 } }), "parameter_info.g.unit: must be text"],
    ["parameter_info stray key", (c) => (c.parameter_info = { g: { unit: "1/min", value: 3 } }), 'parameter_info.g: Unrecognized key: "value"'],
    ["parameter_info entry shape", (c) => (c.parameter_info = { g: "1/min" }), "parameter_info.g: must be an object { unit?, note? }"],
    ["parameter_info shape", (c) => (c.parameter_info = []), "parameter_info: must be an object of parameter names to { unit?, note? }"],
  ])("rejects a bad %s", (_rule, edit, message) => {
    expect(firstIssue(edit)).toContain(message);
    expect(firstIssue(edit).startsWith(message.split(":")[0] as string)).toBe(true);
  });

  it("accepts parameter_info with unit and note at their longest (40 and 500 characters), or either alone", () => {
    const c = good();
    c.parameter_info = { K: { unit: "u".repeat(40), note: "n".repeat(500) }, g: { unit: "1/min" }, n: { note: "Hill coefficient" } };
    expect(parseCircuit(c).parameter_info).toEqual(c.parameter_info);
    expect(parseCircuit(good())).not.toHaveProperty("parameter_info");
  });

  it("rejects a document that is not an object, naming the root", () => {
    expect(() => parseCircuit("x")).toThrow("(root): ");
  });

  it("accepts every allowed formula element", () => {
    const c = good();
    c.reactions[0].rate = { law: "expression", expression: "vA * exp(-C/K) + log(1 + A) - sqrt(B) * min(A, B, 3) / max(1, pow(C, 2)) + (-K)^2 * 0" };
    expect(() => parseCircuit(c)).not.toThrow();
  });

  it("collects every problem in .issues, the first in .message", () => {
    try {
      parseCircuit({ ...good(), format: "x", volume_fL: -1 });
    } catch (e) {
      expect((e as CircuitError).issues.length).toBeGreaterThanOrEqual(2);
      expect((e as CircuitError).message).toBe((e as CircuitError).issues[0]);
    }
  });
});

describe("overrides and options", () => {
  it("checkOverrides names an unknown parameter and re-checks bounds", () => {
    const c = parseCircuit(good());
    expect(() => checkOverrides(c, { Kc: 1 })).toThrow('overrides.Kc: unknown parameter "Kc"');
    expect(() => checkOverrides(c, { K: -1 })).toThrow("reactions[0].rate.K: must be > 0");
    expect(() => checkOverrides(c, { K: 5, g: 0.1 })).not.toThrow();
  });

  it("the run options schema (CLI limits) maps to the engine's options and names the option it refuses", () => {
    expect(toEngineOptions(CliRunOptions.parse({ method: "ssa", t_end: 10, dt: 1, runs: 3, seed: 4, burn_in: 2, tau_epsilon: undefined })))
      .toEqual({ method: "ssa", tEnd: 10, dt: 1, runs: 3, seed: 4, burnIn: 2 });
    const bad = (o: Record<string, unknown>) => describeIssue((CliRunOptions.safeParse({ method: "ssa", ...o }).error?.issues ?? [])[0] as never);
    expect(bad({ t_end: 10, dt: 20 })).toBe("dt: must be <= tEnd (10)");
    expect(bad({ t_end: 10, dt: 1, runs: 0 })).toBe("runs: must be >= 1");
    expect(bad({ t_end: 10, dt: 1, runs: 2.5 })).toBe("runs: must be a positive integer");
    expect(bad({ t_end: 10, dt: 1, method: "euler" })).toBe('method: must be "ode", "ssa" or "tau"');
    expect(bad({ t_end: 10, dt: 1, seed: -4 })).toBe("seed: must be >= 0");
    expect(bad({ t_end: 10, dt: 1, burn_in: 11 })).toBe("burn_in: must be <= tEnd (10)");
    expect(bad({ t_end: 10, dt: 1e-6 })).toBe("dt: gives more than 1000001 grid points; use a larger dt");
    expect(bad({ t_end: -1, dt: 1 })).toBe("t_end: must be > 0");
    // The API's limits are tighter, and its messages name t_end.
    const api = (o: Record<string, unknown>) => describeIssue((RunLaunch.safeParse({ version_id: "1", method: "ssa", ...o }).error?.issues ?? [])[0] as never);
    expect(api({ t_end: 10, dt: 20 })).toBe("dt: must be <= t_end (10)");
    expect(api({ t_end: 10, dt: 1, runs: 20_001 })).toBe("runs: at most 20000 cells per run");
  });
});
