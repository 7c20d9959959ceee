import { describe, expect, it } from "vitest";

import { getTemplate } from "@/lib/view/circuit-templates";
import { extractWiring, layoutCircle } from "@/lib/view/circuit-wiring";
import { parseCircuit } from "@/lib/schemas/circuit";

const circuit = (species: string[], reactions: unknown[], parameters: Record<string, number> = { k: 1, K: 1, n: 2 }) =>
  parseCircuit({
    format: "burstwise.circuit/1", units: { time: "min", amount: "molecules" },
    species: species.map((id) => ({ id, initial: 0 })), parameters, reactions,
  });

describe("extractWiring", () => {
  it("extractWiring(ring timer) is the loop A → B → C ⊣ A and nothing else", () => {
    const w = extractWiring(getTemplate("ring-timer")!);
    expect(w.nodes).toEqual(["A", "B", "C"]);
    expect(w.edges).toEqual([
      { from: "C", to: "A", kind: "repression", reactions: ["make_A"] },
      { from: "A", to: "B", kind: "activation", reactions: ["make_B"] },
      { from: "B", to: "C", kind: "activation", reactions: ["make_C"] },
    ]);
  });

  it("extractWiring(two-stage reporter) draws the template arrow M → P and no edge for sources and sinks", () => {
    const w = extractWiring(getTemplate("two-stage-reporter")!);
    expect(w.edges).toEqual([{ from: "M", to: "P", kind: "conversion", reactions: ["translate"] }]);
  });

  it("extractWiring(birth-death) has a node and no edges", () => {
    expect(extractWiring(getTemplate("birth-death")!)).toEqual({ nodes: ["X"], edges: [] });
  });

  it("extractWiring reads Hill activation of a loss as a repression, and keeps self-loops", () => {
    const w = extractWiring(circuit(["X", "Y"], [
      { id: "lose_X", reactants: { X: 1 }, rate: { law: "hill_activation", input: "Y", vmax: "k", K: "K", n: "n" } },
      { id: "make_Y", products: { Y: 1 }, rate: { law: "hill_repression", input: "Y", vmax: "k", K: "K", n: "n" } },
      { id: "lose_Y", reactants: { Y: 1 }, rate: { law: "hill_repression", input: "X", vmax: "k", K: "K", n: "n" } },
    ]));
    expect(w.edges).toEqual([
      { from: "Y", to: "X", kind: "repression", reactions: ["lose_X"] },
      { from: "Y", to: "Y", kind: "repression", reactions: ["make_Y"] },
      { from: "X", to: "Y", kind: "activation", reactions: ["lose_Y"] },
    ]);
  });

  it("extractWiring merges edges of the same kind and lists every reaction behind them", () => {
    const w = extractWiring(circuit(["A", "D"], [
      { id: "dimerise", reactants: { A: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: "k" } },
      { id: "dimerise_again", reactants: { A: 2 }, products: { D: 1 }, rate: { law: "mass_action", k: "k" } },
      { id: "split", reactants: { D: 1 }, products: { A: 2 }, rate: { law: "mass_action", k: "k" } },
    ]));
    expect(w.edges).toEqual([
      { from: "A", to: "D", kind: "conversion", reactions: ["dimerise", "dimerise_again"] },
      { from: "D", to: "A", kind: "conversion", reactions: ["split"] },
    ]);
  });

  it("extractWiring draws formula influences from each species read, but not a species' own loss", () => {
    const w = extractWiring(circuit(["X", "Y"], [
      { id: "make_X", products: { X: 1 }, rate: { law: "expression", expression: "k*Y^n/(K^n+Y^n)" } },
      { id: "lose_X", reactants: { X: 1 }, rate: { law: "expression", expression: "k*X" } },
      { id: "make_Y", products: { Y: 1 }, rate: { law: "mass_action", k: "k" } },
    ]));
    expect(w.edges).toEqual([{ from: "Y", to: "X", kind: "influence", reactions: ["make_X"] }]);
  });
});

describe("layoutCircle", () => {
  it("layoutCircle puts the first node at the top and the rest clockwise at radius r", () => {
    const p = layoutCircle(["A", "B", "C", "D"], 100, 100, 50);
    const close = (a: number, b: number) => expect(a).toBeCloseTo(b, 9);
    close(p.get("A")!.x, 100); close(p.get("A")!.y, 50);
    close(p.get("B")!.x, 150); close(p.get("B")!.y, 100);
    close(p.get("C")!.x, 100); close(p.get("C")!.y, 150);
    close(p.get("D")!.x, 50); close(p.get("D")!.y, 100);
  });

  it("layoutCircle puts a single node at the centre", () => {
    expect(layoutCircle(["X"], 10, 20, 5).get("X")).toEqual({ x: 10, y: 20 });
  });
});
