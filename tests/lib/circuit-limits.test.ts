import { describe, expect, it } from "vitest";

import { CircuitError, parseCircuit } from "@/lib/schemas/circuit";

/** A valid one-species circuit; `edit` changes the decoded JSON the way a hostile client would. */
function circuitJson(edit: (text: string) => string = (t) => t): unknown {
  const base = {
    format: "burstwise.circuit/1",
    units: { time: "s", amount: "molecules" },
    species: [{ id: "A", initial: 0 }],
    parameters: { k: 1 },
    parameter_info: { k: { unit: "1/s" } },
    reactions: [{ id: "R", products: { A: 1 }, rate: { law: "mass_action", k: "k" } }],
  };
  return JSON.parse(edit(JSON.stringify(base)));
}

function firstIssue(json: unknown): string {
  try {
    parseCircuit(json);
  } catch (e) {
    if (e instanceof CircuitError) return e.message;
    throw e;
  }
  return "accepted";
}

const withFormula = (expression: string) => circuitJson((t) => t.replace('{"law":"mass_action","k":"k"}', JSON.stringify({ law: "expression", expression })));

describe("rate formulas in a circuit file are bounded", () => {
  it("in parentheses depth (checked before the parser recurses)", () => {
    expect(firstIssue(withFormula("(".repeat(101) + "A" + ")".repeat(101)))).toBe("reactions[0].rate.expression: formula has parentheses nested more than 100 deep");
    expect(firstIssue(withFormula("(".repeat(100) + "A" + ")".repeat(100)))).toBe("accepted");
  });

  it("in node count", () => {
    // Seven factors, each a sum of 150 ones (299 nodes, depth 150), multiplied: 2,099 nodes, depth 156.
    const sum = Array(150).fill("1").join("+");
    const text = Array(7).fill(`(${sum})`).join("*");
    expect(text.length).toBeLessThan(4000);
    expect(firstIssue(withFormula(text))).toBe("reactions[0].rate.expression: formula has more than 2000 terms (numbers, symbols, operators and calls)");
    expect(firstIssue(withFormula(Array(150).fill("A").join("+")))).toBe("accepted");
  });

  it("in depth, counting operators rather than the parentheses around them", () => {
    expect(firstIssue(withFormula(Array(202).fill("A").join("^")))).toBe("reactions[0].rate.expression: formula nested more than 200 deep");
    expect(firstIssue(withFormula("-".repeat(250) + "A"))).toBe("reactions[0].rate.expression: formula nested more than 200 deep");
  });

  it("in length", () => {
    expect(firstIssue(withFormula("A" + "+A".repeat(2000)))).toBe("reactions[0].rate.expression: formula longer than 4000 characters");
  });
});

describe("names every JavaScript object has are refused, naming the field", () => {
  const reason = (id: string) => `"${id}" is a reserved name (a property of every JavaScript object); choose another`;

  it.each([
    ["a parameter __proto__ (zod would drop it silently)", (t: string) => t.replace('"parameters":{"k":1}', '"parameters":{"__proto__":1,"k":1}'), `parameters.__proto__: ${reason("__proto__")}`],
    ["a parameter constructor", (t: string) => t.replace('"parameters":{"k":1}', '"parameters":{"constructor":1,"k":1}'), `parameters.constructor: ${reason("constructor")}`],
    ["a species __proto__ (stored before)", (t: string) => t.replace(/"A"/g, '"__proto__"'), `species[0].id: ${reason("__proto__")}`],
    ["a species constructor", (t: string) => t.replace(/"A"/g, '"constructor"'), `species[0].id: ${reason("constructor")}`],
    ["a species prototype", (t: string) => t.replace(/"A"/g, '"prototype"'), `species[0].id: ${reason("prototype")}`],
    ["a reaction toString", (t: string) => t.replace('"id":"R"', '"id":"toString"'), `reactions[0].id: ${reason("toString")}`],
    ["a stoichiometry key __proto__", (t: string) => t.replace('"products":{"A":1}', '"products":{"A":1,"__proto__":2}'), `reactions[0].products.__proto__: ${reason("__proto__")}`],
    ["a parameter_info key __proto__", (t: string) => t.replace('"parameter_info":{"k"', '"parameter_info":{"__proto__"'), `parameter_info.__proto__: ${reason("__proto__")}`],
  ])("%s", (_what, edit, message) => {
    expect(firstIssue(circuitJson(edit))).toBe(message);
  });

  it("ids that merely contain such a name are fine", () => {
    expect(firstIssue(circuitJson((t) => t.replace(/"A"/g, '"constructor_A"')))).toBe("accepted");
  });
});
