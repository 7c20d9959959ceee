/**
 * Warnings travel with results on the command line (issue 12 item 1): `simulate`, `trajectory`
 * and `analyze` print a top-level "warnings" array (always present, [] when none), the SBML
 * import's warnings first, and one `warning: <code>: <message>` line each on stderr.
 */
import { spawn } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

/** `node --import tsx cli/index.ts …`, what `npm run --silent cli --` runs. */
function cli(...args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const p = spawn(process.execPath, ["--import", "tsx", "cli/index.ts", ...args], { stdio: ["ignore", "pipe", "pipe"] });
    let stdout = "";
    let stderr = "";
    p.stdout.on("data", (d) => (stdout += d));
    p.stderr.on("data", (d) => (stderr += d));
    p.on("close", (code) => resolve({ code, stdout, stderr }));
  });
}

/** A Level 3 file with no units at all: amounts read as molecules, with two import warnings. */
const LEVEL3_NO_UNITS = `<?xml version="1.0" encoding="UTF-8"?>
<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
  <model id="birth_death">
    <listOfCompartments><compartment id="cell" spatialDimensions="3" size="1" constant="true"/></listOfCompartments>
    <listOfSpecies><species id="X" compartment="cell" initialAmount="5" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
    <listOfReactions>
      <reaction id="make" reversible="false">
        <listOfProducts><speciesReference species="X" stoichiometry="1" constant="true"/></listOfProducts>
        <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><cn>4</cn></math></kineticLaw>
      </reaction>
      <reaction id="lose" reversible="false">
        <listOfReactants><speciesReference species="X" stoichiometry="1" constant="true"/></listOfReactants>
        <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML"><apply><times/><cn>0.5</cn><ci>X</ci></apply></math></kineticLaw>
      </reaction>
    </listOfReactions>
  </model>
</sbml>`;

const dir = mkdtempSync(join(tmpdir(), "bw-warn-"));
const sbmlFile = join(dir, "birth-death.xml");
writeFileSync(sbmlFile, LEVEL3_NO_UNITS);

const IMPORT_WARNINGS = [
  { code: "sbml-no-time-unit", message: "no time unit declared; read as seconds", field: "units.time" },
  { code: "sbml-no-substance-unit", message: "no substance unit declared; amounts read as molecules", field: "units.amount" },
];
const STDERR_LINES = "warning: sbml-no-time-unit: no time unit declared; read as seconds\nwarning: sbml-no-substance-unit: no substance unit declared; amounts read as molecules\n";

describe("cli warnings", () => {
  it("simulate on an SBML file prints the import warnings in its JSON and one line each on stderr", async () => {
    const r = await cli("simulate", sbmlFile, "--t-end", "10", "--dt", "1", "--runs", "4", "--seed", "3", "--threads", "1");
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.warnings).toEqual(IMPORT_WARNINGS);
    expect(Object.keys(out).at(-1)).toBe("warnings");
    expect(r.stderr).toBe(STDERR_LINES);
    expect(out.mean.X[0]).toBe(5);
  });

  it("trajectory and analyze on the SBML file carry the same import warnings", async () => {
    const t = await cli("trajectory", sbmlFile, "--t-end", "5", "--dt", "1", "--seed", "3", "--index", "1");
    expect(t.code).toBe(0);
    expect(JSON.parse(t.stdout).warnings).toEqual(IMPORT_WARNINGS);
    expect(t.stderr).toBe(STDERR_LINES);
    const a = await cli("analyze", sbmlFile);
    expect(a.code).toBe(0);
    const out = JSON.parse(a.stdout);
    expect(out.steady_state.X).toBeCloseTo(8, 6); // 4 / 0.5
    expect(out.warnings).toEqual(IMPORT_WARNINGS);
    expect(a.stderr).toBe(STDERR_LINES);
  });

  it("simulate --method ode on a circuit file prints \"warnings\": [] and nothing on stderr", async () => {
    const r = await cli("simulate", "examples/two-stage-reporter.circuit.json", "--method", "ode", "--t-end", "10", "--dt", "1");
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).warnings).toEqual([]);
    expect(r.stderr).toBe("");
  });
});
