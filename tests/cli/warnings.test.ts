/**
 * Warnings travel with results on the command line (issue 12 item 1): `simulate`, `trajectory`
 * and `analyze` print a top-level "warnings" array (always present, [] when none), the SBML
 * import's warnings first, and one `warning: <code>: <message>` line each on stderr.
 */
import { spawn } from "node:child_process";

import { describe, expect, it } from "vitest";

/** `node scripts/cli.mjs …`, what `npm run --silent cli --` runs. */
function cli(...args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const p = spawn(process.execPath, ["scripts/cli.mjs", ...args], { stdio: ["ignore", "pipe", "pipe"] });
    let stdout = "";
    let stderr = "";
    p.stdout.on("data", (d) => (stdout += d));
    p.stderr.on("data", (d) => (stderr += d));
    p.on("close", (code) => resolve({ code, stdout, stderr }));
  });
}

/** A Level 3 file with no units at all: amounts read as molecules, with two import warnings. */
const sbmlFile = "tests/fixtures/sbml-l3v2-no-units.xml";

const IMPORT_WARNINGS = [
  { code: "sbml-no-time-unit", message: "no time unit declared; read as seconds", field: "units.time" },
  { code: "sbml-no-substance-unit", message: "no substance unit declared; amounts read as molecules", field: "units.amount" },
];
const STDERR_LINES = "warning: sbml-no-time-unit: no time unit declared; read as seconds\nwarning: sbml-no-substance-unit: no substance unit declared; amounts read as molecules\n";

describe("cli warnings", () => {
  it("simulate on an SBML file prints the import warnings in its JSON and one line each on stderr", async () => {
    // t_end 40 leaves a window after 5 relaxation times (2 s each): no stationarity warning joins them.
    const r = await cli("simulate", sbmlFile, "--t-end", "40", "--dt", "1", "--runs", "4", "--seed", "3", "--threads", "1");
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
    const r = await cli("simulate", "examples/two-stage-reporter.circuit.json", "--method", "ode", "--t-end", "2000", "--dt", "10");
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).warnings).toEqual([]);
    expect(r.stderr).toBe("");
  });
});
