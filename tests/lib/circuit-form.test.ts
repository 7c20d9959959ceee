import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

import {
  circuitIssues, circuitToForm, describeField, fieldKey, formToCircuitJson, indexIssues, listIssues, parseSetting, parseStoichiometry, splitIssue,
} from "@/lib/view/circuit-form";
import { blankCircuit, CIRCUIT_TEMPLATES, getTemplate } from "@/lib/view/circuit-templates";
import { CircuitError, parseCircuit } from "@/lib/schemas/circuit";

const EXAMPLES = join(process.cwd(), "examples");

/** What parseCircuit itself reports. */
function parseIssues(json: unknown): string[] {
  try {
    parseCircuit(json);
    return [];
  } catch (e) {
    if (e instanceof CircuitError) return e.issues;
    throw e;
  }
}
const schemaIssues = circuitIssues;

describe("form round trip", () => {
  for (const file of readdirSync(EXAMPLES).filter((f) => f.endsWith(".circuit.json"))) {
    it(`formToCircuitJson(circuitToForm(c)) gives back ${file} unchanged`, () => {
      const c = parseCircuit(JSON.parse(readFileSync(join(EXAMPLES, file), "utf8")));
      const { json, issues } = formToCircuitJson(circuitToForm(c));
      expect(issues).toEqual([]);
      expect(parseCircuit(json)).toEqual(c);
    });
  }

  it("keeps fields the form does not edit (names, notes, empty sides, basal) through a round trip", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1", name: "n", notes: "top notes", description: "d",
      units: { time: "h", amount: "uM" }, volume_fL: 2.5,
      species: [{ id: "X", name: "Repressor", initial: 0.1, notes: "tetR" }],
      parameters: {},
      reactions: [
        { id: "r", name: "make", notes: "leaky", reactants: {}, products: { X: 2 }, rate: { law: "hill_repression", input: "X", vmax: 1e-3, K: 0.5, n: 2, basal: 0 } },
      ],
    });
    expect(parseCircuit(formToCircuitJson(circuitToForm(c)).json)).toEqual(c);
  });

  it("keeps parameter_info (unit text and note per parameter) through a round trip, and an untouched circuit without it gains none", () => {
    const c = parseCircuit({ ...getTemplate("ring-timer")!, parameter_info: { K: { unit: "nM", note: "half-repression level" }, n: { note: "cooperativity" }, g: { unit: "1/min" } } });
    const form = circuitToForm(c);
    expect(form.parameters.map((p) => [p.name, p.unit, p.note])).toEqual([
      ["vA", "", ""], ["vB", "", ""], ["vC", "", ""], ["K", "nM", "half-repression level"], ["n", "", "cooperativity"], ["g", "1/min", ""],
    ]);
    expect(parseCircuit(formToCircuitJson(form).json)).toEqual(c);
    expect(formToCircuitJson(circuitToForm(getTemplate("ring-timer"))).json).not.toHaveProperty("parameter_info");
  });

  it("typed units and notes land in parameter_info in row order; blank ones are left out, and none at all drops the field", () => {
    const form = circuitToForm(getTemplate("ring-timer")!);
    const row = (name: string) => form.parameters.find((p) => p.name === name)!;
    row("g").unit = "1/min";
    row("g").note = "dilution by growth";
    row("vA").note = "   ";
    row("K").unit = "nM";
    expect(formToCircuitJson(form).json.parameter_info).toEqual({ K: { unit: "nM" }, g: { unit: "1/min", note: "dilution by growth" } });
    expect(Object.keys(formToCircuitJson(form).json.parameter_info as object)).toEqual(["K", "g"]);
    // a renamed parameter keeps its text (it lives on the row)
    row("g").name = "gamma";
    form.reactions.slice(3).forEach((r) => (r.k = "gamma"));
    expect(parseCircuit(formToCircuitJson(form).json).parameter_info).toEqual({ K: { unit: "nM" }, gamma: { unit: "1/min", note: "dilution by growth" } });
    for (const p of form.parameters) (p.unit = ""), (p.note = "");
    const json = formToCircuitJson(form).json;
    expect(json).not.toHaveProperty("parameter_info");
    expect(parseCircuit(json).parameters).toHaveProperty("gamma", 0.2);
  });

  it("every template is a valid circuit, and the blank one is the smallest the schema accepts", () => {
    expect(CIRCUIT_TEMPLATES.map((t) => t.id)).toEqual(["blank", "birth-death", "two-stage-reporter", "ring-timer"]);
    for (const t of CIRCUIT_TEMPLATES) expect(() => parseCircuit(t.circuit)).not.toThrow();
    expect(blankCircuit().species).toHaveLength(1);
    expect(getTemplate("nope")).toBeNull();
    const a = getTemplate("ring-timer")!;
    a.parameters!.n = 99;
    expect(getTemplate("ring-timer")!.parameters!.n).toBe(4);
  });
});

describe("parseStoichiometry", () => {
  it('parseStoichiometry("A + 2 B") is { A: 1, B: 2 }, and "2*A + A" adds up', () => {
    expect(parseStoichiometry("A + 2 B")).toEqual({ ok: true, value: { A: 1, B: 2 } });
    expect(parseStoichiometry("2*A + A")).toEqual({ ok: true, value: { A: 3 } });
    expect(parseStoichiometry("3B")).toEqual({ ok: true, value: { B: 3 } });
  });

  it('parseStoichiometry("") and "∅" are empty; junk is an error naming the term', () => {
    expect(parseStoichiometry("  ")).toEqual({ ok: true, value: {} });
    expect(parseStoichiometry("∅")).toEqual({ ok: true, value: {} });
    const bad = parseStoichiometry("A + 2.5 B");
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.reason).toContain('"2.5 B"');
  });
});

describe("issues land on the field they concern", () => {
  it('splitIssue("reactions[3].rate.K: unknown parameter \\"Kc\\"") gives the path and reason', () => {
    expect(splitIssue('reactions[3].rate.K: unknown parameter "Kc"')).toEqual({ path: ["reactions", 3, "rate", "K"], message: 'unknown parameter "Kc"' });
    expect(splitIssue("(root): must be an object")).toEqual({ path: [], message: "must be an object" });
    expect(splitIssue("volume_fL: is required when units.amount is \"nM\"")).toEqual({ path: ["volume_fL"], message: 'is required when units.amount is "nM"' });
    expect(splitIssue("no path here")).toEqual({ path: [], message: "no path here" });
  });

  it("an unknown parameter in a Hill field is reported at that reaction's field", () => {
    const form = circuitToForm(getTemplate("ring-timer")!);
    form.reactions[1].K = "Kc";
    const { json, issues } = formToCircuitJson(form);
    const byField = indexIssues(form, issues, schemaIssues(json));
    expect([...byField.entries()]).toEqual([[fieldKey.reaction(form.reactions[1].key, "rate.K"), ['unknown parameter "Kc"']]]);
  });

  it("a negative rate, an unknown species, a broken formula and a missing volume each reach their own input", () => {
    const form = circuitToForm(getTemplate("ring-timer")!);
    form.parameters.find((p) => p.name === "g")!.value = "-1";
    form.reactions[3].reactants = "Q";
    form.reactions[0].law = "expression";
    form.reactions[0].expression = "vA / (1 + C^";
    form.volumeFL = "";
    form.species[2].initial = "lots";
    const { json, issues } = formToCircuitJson(form);
    const byField = indexIssues(form, issues, schemaIssues(json));
    const keys = [...byField.keys()];
    expect(keys).toContain("volume_fL");
    expect(keys).toContain(fieldKey.species(form.species[2].key, "initial"));
    expect(keys).toContain(fieldKey.reaction(form.reactions[3].key, "reactants"));
    expect(keys).toContain(fieldKey.reaction(form.reactions[0].key, "rate.expression"));
    // a negative parameter breaks k >= 0 where it is used: the schema names the reaction's field
    expect(byField.get(fieldKey.reaction(form.reactions[4].key, "rate.k"))).toEqual(['must be >= 0 (parameter "g" is -1)']);
    expect(byField.get(fieldKey.species(form.species[2].key, "initial"))).toEqual(["must be a finite number"]);
    // …and once beside the parameter's own value, where the fix goes
    const g = form.parameters.find((p) => p.name === "g")!;
    expect(byField.get(fieldKey.parameter(g.key, "value"))).toEqual(['must be >= 0 (parameter "g" is -1)']);
    // the problem list counts each reported problem once (three uses of g, the echo not counted)
    const listed = listIssues(form, issues, schemaIssues(json));
    expect(listed.filter((i) => i.message.includes('parameter "g"'))).toHaveLength(3);
  });

  it("a too-long note or unit is reported beside that parameter's note or unit input; an entry for no parameter at the parameters section", () => {
    const form = circuitToForm(getTemplate("ring-timer")!);
    const K = form.parameters.find((p) => p.name === "K")!;
    const g = form.parameters.find((p) => p.name === "g")!;
    K.note = "n".repeat(501);
    g.unit = "u".repeat(41);
    const { json, issues } = formToCircuitJson(form);
    const byField = indexIssues(form, issues, schemaIssues(json));
    expect([...byField.entries()]).toEqual([
      [fieldKey.parameter(K.key, "note"), ["must be at most 500 characters"]],
      [fieldKey.parameter(g.key, "unit"), ["must be at most 40 characters"]],
    ]);
    expect(describeField(fieldKey.parameter(K.key, "note"), form)).toBe("parameter K, note");

    // a raw file naming an undeclared parameter keeps that entry in the form, so the schema still reports it
    const raw = circuitToForm({ ...getTemplate("ring-timer")!, parameter_info: { Kc: { unit: "nM" }, K: { note: "ok" } } });
    const back = formToCircuitJson(raw);
    expect(back.json.parameter_info).toEqual({ K: { note: "ok" }, Kc: { unit: "nM" } });
    const rawIssues = schemaIssues(back.json);
    expect(rawIssues).toEqual(['parameter_info.Kc: unknown parameter "Kc"']);
    expect([...indexIssues(raw, back.issues, rawIssues).entries()]).toEqual([["parameters", ['unknown parameter "Kc"']]]);
  });

  it("describeField names the place of a field key in words", () => {
    const form = circuitToForm(getTemplate("ring-timer")!);
    expect(describeField(fieldKey.reaction(form.reactions[1].key, "rate.K"), form)).toBe("reaction make_B, K");
    expect(describeField(fieldKey.reaction(form.reactions[2].key, "rate.expression"), form)).toBe("reaction make_C, formula");
    expect(describeField(fieldKey.reaction(form.reactions[3].key), form)).toBe("reaction lose_A");
    expect(describeField(fieldKey.parameter(form.parameters[0].key, "value"), form)).toBe("parameter vA, value");
    expect(describeField(fieldKey.species(form.species[0].key, "initial"), form)).toBe("species A, initial amount");
    expect(describeField("volume_fL", form)).toBe("cell volume");
    expect(describeField("units.amount", form)).toBe("amount unit");
    expect(describeField("circuit", form)).toBe("circuit");
  });

  it("a repeated or empty parameter name is reported at the name input of that row", () => {
    const form = circuitToForm(getTemplate("birth-death")!);
    form.parameters[1].name = "k";
    form.parameters.push({ key: "extra", name: "", value: "1", unit: "", note: "" });
    const { issues } = formToCircuitJson(form);
    expect(issues).toEqual([
      { field: fieldKey.parameter(form.parameters[1].key, "name"), message: 'duplicate parameter name "k"' },
      { field: fieldKey.parameter("extra", "name"), message: "is required" },
    ]);
  });

  it("a parameter named like a species is reported at its name input", () => {
    const form = circuitToForm(getTemplate("birth-death")!);
    form.parameters[0].name = "X";
    const { json, issues } = formToCircuitJson(form);
    const byField = indexIssues(form, issues, schemaIssues(json));
    expect(byField.get(fieldKey.parameter(form.parameters[0].key, "name"))).toEqual(['name already used by species "X"']);
  });
});

describe("circuitIssues", () => {
  it("circuitIssues(valid circuit) is empty and equals parseCircuit's issues once the structure is right", () => {
    expect(circuitIssues(getTemplate("ring-timer"))).toEqual([]);
    const c = getTemplate("ring-timer")!;
    c.reactions[1].rate = { law: "hill_activation", input: "Q", vmax: "vB", K: "Kc", n: "n" };
    expect(circuitIssues(c)).toEqual(parseIssues(c));
    expect(circuitIssues(c)).toEqual(['reactions[1].rate.input: unknown species "Q"', 'reactions[1].rate.K: unknown parameter "Kc"']);
  });

  it("circuitIssues reports a bad reference while another field is half-typed, which parseCircuit alone hides", () => {
    const c = JSON.parse(JSON.stringify(getTemplate("ring-timer"))) as Record<string, unknown> & { species: { initial: unknown }[]; reactions: { id: string; rate: Record<string, unknown> }[]; parameters: Record<string, unknown> };
    c.species[0].initial = "lots";
    c.parameters.g = "fast";
    c.reactions[1].rate.K = "Kc";
    c.reactions[2].id = "";
    expect(parseIssues(c)).not.toContain('reactions[1].rate.K: unknown parameter "Kc"');
    expect(circuitIssues(c)).toEqual([
      "species[0].initial: must be a finite number",
      "parameters.g: must be a finite number",
      "reactions[2].id: must be a valid identifier (letters, digits and _, not starting with a digit)",
      'reactions[1].rate.K: unknown parameter "Kc"',
    ]);
  });

  it("circuitIssues of junk is the structural complaint only", () => {
    expect(circuitIssues(42)).toEqual(parseIssues(42));
    expect(circuitIssues({ format: "burstwise.circuit/1" }).length).toBeGreaterThan(0);
  });
});

describe("the schedule in the form", () => {
  const induced = () => JSON.parse(readFileSync(join(EXAMPLES, "two-stage-reporter-induction.circuit.json"), "utf8"));

  it("reads each change as a row (timed or triggered, what it sets as text) and writes it back unchanged", () => {
    const c = parseCircuit({ ...induced(), parameters: { ...induced().parameters, t_on: 100, lag: 5 }, schedule: [{ at: "t_on", set: { km: 2, P: 0 } }, { when: "P > 300 and M < 9", delay: "lag", set: { km: 0.5 } }] });
    const form = circuitToForm(c);
    expect(form.schedule.map(({ kind, at, when, delay, set }) => ({ kind, at, when, delay, set }))).toEqual([
      { kind: "at", at: "t_on", when: "", delay: "", set: "km = 2, P = 0" },
      { kind: "when", at: "", when: "P > 300 and M < 9", delay: "lag", set: "km = 0.5" },
    ]);
    expect(form.extra).not.toHaveProperty("schedule");
    expect(parseCircuit(formToCircuitJson(form).json)).toEqual(c);
  });

  it("a change added to a /1 circuit makes it /2, and removing the last one makes it /1 again", () => {
    const v1 = { ...induced(), format: "burstwise.circuit/1" };
    delete v1.schedule;
    const form = circuitToForm(parseCircuit(v1));
    expect(form.schedule).toEqual([]);
    const added = { ...form, schedule: [{ key: "c1", kind: "at" as const, at: "50", when: "", delay: "", set: "km = 1", extra: {} }] };
    const json = formToCircuitJson(added).json;
    expect(json.format).toBe("burstwise.circuit/2");
    expect(parseCircuit(json).schedule).toEqual([{ at: 50, set: { km: 1 } }]);
    expect(formToCircuitJson({ ...added, schedule: [] }).json.format).toBe("burstwise.circuit/1");
  });

  it("parseSetting reads \"km = 2; P = P_high\", and refuses junk, a repeated name or a formula, naming the part", () => {
    expect(parseSetting("km = 2; P = P_high")).toEqual({ ok: true, value: { km: 2, P: "P_high" } });
    expect(parseSetting("")).toEqual({ ok: true, value: {} });
    expect(parseSetting("km 2")).toEqual({ ok: false, reason: 'cannot read "km 2": write what the change sets as "km = 2, P = 0"' });
    expect(parseSetting("km = 1, km = 2")).toEqual({ ok: false, reason: '"km" is set twice' });
    expect(parseSetting("km = 2*k")).toEqual({ ok: false, reason: '"km = 2*k": the value must be a number or a parameter name' });
  });

  it("each problem of a change reaches its own input, and describeField names the change", () => {
    const form = circuitToForm(parseCircuit(induced()));
    const bad = {
      ...form,
      schedule: [
        { ...form.schedule[0], at: "t_never" },
        { key: "c9", kind: "when" as const, at: "", when: "Q > 3", delay: "-1", set: "IPTG = 5", extra: {} },
        { key: "c10", kind: "at" as const, at: "10", when: "", delay: "", set: "km 3", extra: {} },
      ],
    };
    const { json, issues } = formToCircuitJson(bad);
    const byField = indexIssues(bad, issues, circuitIssues(json));
    expect(byField.get(fieldKey.change(form.schedule[0].key, "at"))).toEqual(['unknown parameter "t_never"']);
    expect(byField.get(fieldKey.change("c9", "when"))?.[0]).toMatch(/Q/);
    expect(byField.get(fieldKey.change("c9", "delay"))?.[0]).toMatch(/>= 0/);
    expect(byField.get(fieldKey.change("c9", "set"))).toEqual(['unknown species or parameter "IPTG"']);
    expect(byField.get(fieldKey.change("c10", "set"))?.[0]).toMatch(/^cannot read "km 3"/);
    expect(describeField(fieldKey.change("c9", "delay"), bad)).toBe("schedule change 2, delay");
  });
});
