import { describe, expect, it } from "vitest";

import { sbmlToCircuit } from "@/ssa/sbml";

import { deepMathSbml, doublingChainSbml, sbmlModel, splitEntitySbml } from "../support/hostile-sbml";

const MATHML = "http://www.w3.org/1998/Math/MathML";
const ci = (x: string) => `<ci>${x}</ci>`;
const math = (content: string) => `<math xmlns="${MATHML}">${content}</math>`;
const plus = (...args: string[]) => `<apply><plus/>${args.join("")}</apply>`;

/** Runs `fn` and returns its error and how long it took, in ms. */
function timed(fn: () => unknown): { error: Error | undefined; ms: number } {
  const t0 = performance.now();
  try {
    fn();
    return { error: undefined, ms: performance.now() - t0 };
  } catch (e) {
    return { error: e as Error, ms: performance.now() - t0 };
  }
}

describe("SBML import bounds the work of expanding formulas", () => {
  it("refuses the doubling chain f0..f29 by naming the first definition past 2000 nodes, in well under a second", () => {
    const xml = doublingChainSbml(29);
    expect(xml.length).toBeLessThan(8 * 1024);
    const { error, ms } = timed(() => sbmlToCircuit(xml));
    // f_i has 2^(i+1) − 1 nodes with a one-node argument: f9 is the first above 2000 (1023 → 2047).
    expect(error?.message).toBe('sbml: functionDefinition "f9": expands to more than 2000 nodes');
    expect(ms).toBeLessThan(1000); // unbounded, f20 alone took 21 s and f29 never finished
  });

  it("still expands a short chain (f0..f8, 2^8 ones) into the formula it stands for", () => {
    const { circuit } = sbmlToCircuit(doublingChainSbml(8));
    const rate = circuit.reactions[0]!.rate as { law: string; expression: string };
    expect(rate.law).toBe("expression");
    expect(rate.expression.match(/1/g)).toHaveLength(256);
  });

  it("bounds arguments that grow by nesting calls: g(x) = x·x·x·x applied six times (4^6 leaves)", () => {
    const g = `<functionDefinition id="g">${math(`<lambda><bvar>${ci("x")}</bvar><apply><times/>${ci("x")}${ci("x")}${ci("x")}${ci("x")}</apply></lambda>`)}</functionDefinition>`;
    const law = "<apply><ci>g</ci>".repeat(6) + ci("A") + "</apply>".repeat(6);
    const { error, ms } = timed(() => sbmlToCircuit(sbmlModel(law, { functions: g })));
    expect(error?.message).toBe('sbml: reaction "R1" kineticLaw: function "g" expands to more than 2000 nodes');
    expect(ms).toBeLessThan(1000);
  });

  it("bounds chains of assignment rules (p_i = p_{i−1} + p_{i−1}) that a kinetic law uses", () => {
    const n = 30;
    const parameters = Array.from({ length: n + 1 }, (_, i) => `<parameter id="p${i}" value="1" constant="${i === 0}"/>`).join("");
    const rules = Array.from({ length: n }, (_, k) => `<assignmentRule variable="p${k + 1}">${math(plus(ci(`p${k}`), ci(`p${k}`)))}</assignmentRule>`).join("");
    const { error, ms } = timed(() => sbmlToCircuit(sbmlModel(ci(`p${n}`), { parameters, rules })));
    expect(error?.message).toBe('sbml: reaction "R1" kineticLaw: expands to more than 2000 nodes');
    expect(ms).toBeLessThan(1000);
  });

  it("evaluates a 40-link chain of initial assignments once per link (p40 = 2^40)", () => {
    const n = 40;
    const parameters = Array.from({ length: n + 1 }, (_, i) => `<parameter id="p${i}" value="1" constant="true"/>`).join("");
    const initialAssignments = Array.from({ length: n }, (_, k) => `<initialAssignment symbol="p${k + 1}">${math(plus(ci(`p${k}`), ci(`p${k}`)))}</initialAssignment>`).join("");
    const { circuit } = sbmlToCircuit(sbmlModel(ci(`p${n}`), { parameters, initialAssignments }));
    expect(circuit.parameters?.[`p${n}`]).toBe(2 ** 40);
  });

  it("refuses function definitions that call themselves, naming the cycle", () => {
    const def = (id: string, callee: string) => `<functionDefinition id="${id}">${math(`<lambda><bvar>${ci("x")}</bvar><apply>${ci(callee)}${ci("x")}</apply></lambda>`)}</functionDefinition>`;
    const xml = sbmlModel(`<apply>${ci("h1")}<cn>1</cn></apply>`, { functions: def("h1", "h2") + def("h2", "h1") });
    expect(() => sbmlToCircuit(xml)).toThrow('sbml: listOfFunctionDefinitions: function definitions call themselves ("h1" → "h2" → "h1"); recursion is not allowed');
  });

  it("stops at the caller's time budget, naming where it stopped", () => {
    // A clock that advances one second per reading: the budget of 3 s is spent by the third reaction check.
    let t = 0;
    const now = () => (t += 1000);
    const xml = sbmlModel("<cn>1</cn>");
    expect(() => sbmlToCircuit(xml, { timeBudget: { ms: 3000, now } })).not.toThrow();
    t = 0;
    expect(() => sbmlToCircuit(xml, { timeBudget: { ms: 500, now } })).toThrow(/^sbml: reaction "R1": the import took longer than 0\.5 s; the model is too large$/);
  });
});

describe("SBML import refuses XML an attacker shapes", () => {
  it("MathML nested 150 deep is an SbmlError naming the kinetic law", () => {
    expect(() => sbmlToCircuit(deepMathSbml(150))).toThrow(/^sbml: reaction "R1" kineticLaw: MathML nested more than 100 deep$/);
  });

  it("elements nested 300 deep are an SbmlError, not the XML parser's own error", () => {
    expect(() => sbmlToCircuit(deepMathSbml(300))).toThrow(/^sbml: elements nested more than 160 deep$/);
  });

  it("MathML nested 90 deep still imports", () => {
    expect(sbmlToCircuit(deepMathSbml(90)).circuit.reactions).toHaveLength(1);
  });

  it("an entity declaration split over lines is refused with its line", () => {
    expect(() => sbmlToCircuit(splitEntitySbml())).toThrow(/^sbml: line 2: <!DOCTYPE> declarations are not allowed/);
  });

  it("any DOCTYPE is refused, however spaced; comments and CDATA that mention one are not", () => {
    expect(() => sbmlToCircuit(sbmlModel("<cn>1</cn>", { head: "\n<!DOCTYPE\n  sbml>" }))).toThrow(/^sbml: line 2: <!DOCTYPE> declarations are not allowed/);
    expect(() => sbmlToCircuit(sbmlModel("<cn>1</cn>", { head: '<!DOCTYPE sbml SYSTEM "http://evil.example/x.dtd">' }))).toThrow(/<!DOCTYPE> declarations are not allowed/);
    const quiet = sbmlModel("<cn>1</cn>", { head: "\n<!-- no <!DOCTYPE here --><!-- <!ENTITY -->" });
    expect(sbmlToCircuit(quiet).circuit.reactions).toHaveLength(1);
  });
});

describe("SBML import refuses ids every JavaScript object already has", () => {
  it.each([
    ["species", "__proto__", (id: string) => sbmlModel("<cn>1</cn>", { speciesId: id })],
    ["species", "constructor", (id: string) => sbmlModel("<cn>1</cn>", { speciesId: id })],
    ["parameter", "__proto__", (id: string) => sbmlModel(ci(id), { parameters: `<parameter id="${id}" value="2" constant="true"/>` })],
    ["parameter", "prototype", (id: string) => sbmlModel(ci(id), { parameters: `<parameter id="${id}" value="2" constant="true"/>` })],
  ])("%s %s", (kind, id, build) => {
    expect(() => sbmlToCircuit(build(id))).toThrow(`sbml: ${kind} "${id}": "${id}" is a reserved name (a property of every JavaScript object); choose another`);
  });
});
