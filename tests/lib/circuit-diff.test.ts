import { describe, expect, it } from "vitest";

import { describeReaction, diffCircuits } from "@/lib/view/circuit-diff";
import { getTemplate } from "@/lib/view/circuit-templates";
import type { Circuit } from "@/ssa/types";

const ring = (): Circuit => getTemplate("ring-timer")!;

describe("diffCircuits", () => {
  it("diffCircuits(c, copy of c) is empty", () => {
    const d = diffCircuits(ring(), ring());
    expect(d.isEmpty).toBe(true);
    expect(d.circuit).toEqual([]);
    expect(d.parameters).toEqual({ added: [], removed: [], changed: [], reordered: false });
  });

  it("diffCircuits(a, b) names a changed parameter with both values", () => {
    const b = ring();
    b.parameters!.n = 2;
    const d = diffCircuits(ring(), b);
    expect(d.isEmpty).toBe(false);
    expect(d.parameters.changed).toEqual([{ id: "n", changes: [{ field: "value", from: "4", to: "2" }] }]);
    expect(d.species.changed).toEqual([]);
    expect(d.reactions.changed).toEqual([]);
  });

  it("diffCircuits(a, b) lists added and removed parameters and species with a summary", () => {
    const b = ring();
    delete b.parameters!.g;
    b.parameters!.gA = 0.3;
    b.species.push({ id: "D", initial: 5 });
    const d = diffCircuits(ring(), b);
    expect(d.parameters.added).toEqual([{ id: "gA", summary: "= 0.3" }]);
    expect(d.parameters.removed).toEqual([{ id: "g", summary: "= 0.2" }]);
    expect(d.species.added).toEqual([{ id: "D", summary: "initial 5" }]);
    expect(d.species.removed).toEqual([]);
  });

  it("diffCircuits(a, b) reports a parameter's unit text and note added, changed and removed, beside its value", () => {
    const a = ring();
    a.parameter_info = { K: { unit: "nM", note: "half-repression level" }, g: { note: "dilution" } };
    const b = ring();
    b.parameter_info = { K: { unit: "nM", note: "half-repression level, from the fit" }, n: { unit: "1" }, vA: { unit: "nM/min" } };
    b.parameters!.vA = 50;
    const d = diffCircuits(a, b);
    expect(d.isEmpty).toBe(false);
    expect(d.parameters.changed).toEqual([
      { id: "vA", changes: [{ field: "value", from: "40", to: "50" }, { field: "unit", from: null, to: "nM/min" }] },
      { id: "K", changes: [{ field: "note", from: "half-repression level", to: "half-repression level, from the fit" }] },
      { id: "n", changes: [{ field: "unit", from: null, to: "1" }] },
      { id: "g", changes: [{ field: "note", from: "dilution", to: null }] },
    ]);
    expect(d.circuit).toEqual([]);
    // a text-only edit is still a change; an added parameter's summary carries its unit text
    const c = ring();
    c.parameter_info = { g: { note: "dilution" } };
    expect(diffCircuits(ring(), c).parameters.changed).toEqual([{ id: "g", changes: [{ field: "note", from: null, to: "dilution" }] }]);
    c.parameters!.kx = 3;
    c.parameter_info.kx = { unit: "1/min" };
    expect(diffCircuits(ring(), c).parameters.added).toEqual([{ id: "kx", summary: "= 3, unit 1/min" }]);
  });

  it("diffCircuits(a, b) reports a rate-law switch field by field (law, dropped and new fields)", () => {
    const b = ring();
    b.reactions[0].rate = { law: "mass_action", k: "vA" };
    const d = diffCircuits(ring(), b);
    expect(d.reactions.changed).toHaveLength(1);
    expect(d.reactions.changed[0].id).toBe("make_A");
    expect(d.reactions.changed[0].changes).toEqual([
      { field: "rate.law", from: "hill_repression", to: "mass_action" },
      { field: "rate.k", from: null, to: "vA" },
      { field: "rate.input", from: "C", to: null },
      { field: "rate.vmax", from: "vA", to: null },
      { field: "rate.K", from: "K", to: null },
      { field: "rate.n", from: "n", to: null },
    ]);
  });

  it("diffCircuits(a, b) shows stoichiometry changes as reaction text and basal leak as a new field", () => {
    const b = ring();
    b.reactions[3].reactants = { A: 2 };
    b.reactions[3].products = { B: 1 };
    b.reactions[1].rate = { ...(b.reactions[1].rate as object), basal: 0.5 } as Circuit["reactions"][number]["rate"];
    const d = diffCircuits(ring(), b);
    expect(d.reactions.changed.map((c) => c.id)).toEqual(["make_B", "lose_A"]);
    expect(d.reactions.changed[0].changes).toEqual([{ field: "rate.basal", from: null, to: "0.5" }]);
    expect(d.reactions.changed[1].changes).toEqual([
      { field: "reactants", from: "A", to: "2 A" },
      { field: "products", from: "∅", to: "B" },
    ]);
  });

  it("diffCircuits(a, b) notices units, volume and name, and a reordering of reactions", () => {
    const b = ring();
    b.units = { time: "s", amount: "uM" };
    b.volume_fL = 5;
    b.name = "Ring timer R3";
    b.reactions.reverse();
    const d = diffCircuits(ring(), b);
    expect(d.circuit).toEqual([
      { field: "name", from: "Ring timer, design R2", to: "Ring timer R3" },
      { field: "units.time", from: "min", to: "s" },
      { field: "units.amount", from: "nM", to: "uM" },
      { field: "volume_fL", from: "1", to: "5" },
    ]);
    expect(d.reactions.reordered).toBe(true);
    expect(d.reactions.changed).toEqual([]);
    expect(d.species.reordered).toBe(false);
  });

  it("diffCircuits(a, b) reads a renamed reaction as one removed and one added", () => {
    const b = ring();
    b.reactions[0] = { ...b.reactions[0], id: "make_A2" };
    const d = diffCircuits(ring(), b);
    expect(d.reactions.added.map((x) => x.id)).toEqual(["make_A2"]);
    expect(d.reactions.removed).toEqual([{ id: "make_A", summary: "∅ → A, hill_repression(C; vmax=vA, K=K, n=n)" }]);
  });

  it("describeReaction writes mass action and formulas in one line", () => {
    expect(describeReaction({ id: "t", reactants: { M: 1 }, products: { M: 1, P: 1 }, rate: { law: "mass_action", k: "kp" } }))
      .toBe("M → M + P, mass_action(k=kp)");
    expect(describeReaction({ id: "e", products: { X: 1 }, rate: { law: "expression", expression: "k*Y/(1+Y)" } }))
      .toBe("∅ → X, expression(k*Y/(1+Y))");
  });
});
