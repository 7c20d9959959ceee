/**
 * SBML documents an attacker would send, built in code so that every test uses the same ones.
 * None of them is large; each would make an unbounded importer do exponential or unbounded work.
 */

const MATHML = "http://www.w3.org/1998/Math/MathML";
const ci = (x: string) => `<ci>${x}</ci>`;
const math = (content: string) => `<math xmlns="${MATHML}">${content}</math>`;

/** A Level 3 model with one species A, one reaction R1 making A at `kineticLaw`, and extra listOf… blocks. */
export function sbmlModel(kineticLaw: string, extra: { functions?: string; parameters?: string; rules?: string; initialAssignments?: string; head?: string; speciesId?: string } = {}): string {
  const a = extra.speciesId ?? "A";
  return `<?xml version="1.0" encoding="UTF-8"?>${extra.head ?? ""}
<sbml xmlns="http://www.sbml.org/sbml/level3/version1/core" level="3" version="1">
<model id="hostile" name="Hostile model">
${extra.functions ? `<listOfFunctionDefinitions>${extra.functions}</listOfFunctionDefinitions>` : ""}
<listOfCompartments><compartment id="c" size="1" constant="true" spatialDimensions="3"/></listOfCompartments>
<listOfSpecies><species id="${a}" compartment="c" initialAmount="0" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
${extra.parameters ? `<listOfParameters>${extra.parameters}</listOfParameters>` : ""}
${extra.initialAssignments ? `<listOfInitialAssignments>${extra.initialAssignments}</listOfInitialAssignments>` : ""}
${extra.rules ? `<listOfRules>${extra.rules}</listOfRules>` : ""}
<listOfReactions><reaction id="R1" reversible="false"><listOfProducts><speciesReference species="${a}" stoichiometry="1" constant="true"/></listOfProducts>
<kineticLaw>${math(kineticLaw)}</kineticLaw></reaction></listOfReactions>
</model></sbml>`;
}

/**
 * f0(x) = x, f_i(x) = f_{i−1}(x) + f_{i−1}(x) up to f_n, and a kinetic law f_n(1): about 8 KB for
 * n = 29, and a formula of 2^29 terms once expanded.
 */
export function doublingChainSbml(n = 29): string {
  const def = (id: string, body: string) => `<functionDefinition id="${id}">${math(`<lambda><bvar>${ci("x")}</bvar>${body}</lambda>`)}</functionDefinition>`;
  const fds = [def("f0", ci("x"))];
  for (let i = 1; i <= n; i++) {
    const call = `<apply>${ci(`f${i - 1}`)}${ci("x")}</apply>`;
    fds.push(def(`f${i}`, `<apply><plus/>${call}${call}</apply>`));
  }
  return sbmlModel(`<apply>${ci(`f${n}`)}<cn>1</cn></apply>`, { functions: fds.join("") });
}

/** MathML `depth` levels deep: − − − … 1 inside the kinetic law. */
export function deepMathSbml(depth: number): string {
  return sbmlModel("<apply><minus/>".repeat(depth) + "<cn>1</cn>" + "</apply>".repeat(depth));
}

/** An entity declaration split over lines (`<!` and `ENTITY` apart), as a filter for `<!ENTITY` would miss it. */
export function splitEntitySbml(): string {
  return sbmlModel("<cn>1</cn>", { head: `\n<!DOCTYPE sbml [\n<!\nENTITY big "xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx">\n]>` });
}
