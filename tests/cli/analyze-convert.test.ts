import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

import { command as analyzeCommand } from "@/cli/commands/analyze";
import { command as convertCommand } from "@/cli/commands/convert";
import { CliError } from "@/cli/common";

/** Runs `npm run cli -- …` the way CONTRACT.md §2 does (node + tsx), returning exit code and output. */
function cli(...args: string[]) {
  const r = spawnSync(process.execPath, ["scripts/cli.mjs", ...args], { encoding: "utf8", timeout: 60_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const dir = mkdtempSync(join(tmpdir(), "bw-cli-"));
let n = 0;
/** Runs a command in-process with --out to a temporary file and returns the file's text. */
async function run(cmd: typeof analyzeCommand, ...args: string[]): Promise<string> {
  const out = join(dir, `out-${n++}`);
  await cmd.run([...args, "--out", out]);
  return readFileSync(out, "utf8");
}
/** The CliError a command throws (its exit code and one-line message). */
async function failure(cmd: typeof analyzeCommand, ...args: string[]): Promise<{ code: number; message: string }> {
  try {
    await cmd.run(args);
  } catch (e) {
    if (e instanceof CliError) return { code: e.exitCode, message: e.message };
    throw e;
  }
  throw new Error("expected the command to fail");
}

describe("cli analyze (through the dispatcher)", () => {
  it("analyze <goodwin n=10> exits 0 with the CONTRACT.md keys (plus warnings), oscillatory; a missing file exits 2 with one line", () => {
    const osc = cli("analyze", "examples/goodwin.circuit.json");
    expect(osc.code).toBe(0);
    const out = JSON.parse(osc.stdout);
    expect(Object.keys(out)).toEqual(["steady_state", "eigenvalues", "stable", "oscillatory", "lna", "warnings"]); // CONTRACT.md's keys, plus the caveats (issue 12)
    expect(Array.isArray(out.warnings)).toBe(true);
    expect(out.oscillatory).toBe(true);
    expect(out.lna).toBeNull();
    const missing = cli("analyze", "examples/nope.circuit.json");
    expect(missing.code).toBe(2);
    expect(missing.stderr).toBe("examples/nope.circuit.json: no such file\n");
  });
});

describe("cli analyze", () => {
  it("analyze --set n=8 on the n=10 Goodwin file equals the stable example's analysis, with LNA keys", async () => {
    const withSet = await run(analyzeCommand, "examples/goodwin.circuit.json", "--set", "n=8");
    const stable = JSON.parse(withSet);
    expect(stable.stable).toBe(true);
    expect(Object.keys(stable.lna)).toEqual(["covariance", "cv", "fano"]);
    expect(withSet).toBe(await run(analyzeCommand, "examples/goodwin-stable.circuit.json"));
  });

  it("analyze rejects a bad --set or --units with exit 2 naming the flag", async () => {
    expect(await failure(analyzeCommand, "examples/goodwin.circuit.json", "--set", "Kc=3")).toEqual({ code: 2, message: '--set Kc: unknown parameter "Kc"' });
    const units = await failure(analyzeCommand, "examples/goodwin.circuit.json", "--units", "moles");
    expect(units.code).toBe(2);
    expect(units.message).toMatch(/^--units: must be "model" or "molecules"/);
  });

  it("analyze of unbounded growth fails with exit 1 and a clear message", async () => {
    const file = join(dir, "grow.circuit.json");
    writeFileSync(file, JSON.stringify({
      format: "burstwise.circuit/1", units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }], reactions: [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: 1 } }],
    }));
    const r = await failure(analyzeCommand, file);
    expect(r.code).toBe(1);
    expect(r.message).toMatch(/^analyze: no steady state found/);
  });
});

describe("cli convert", () => {
  it("convert --to sbml, then analyze and convert --to circuit of that SBML, give the same results as the circuit file", async () => {
    const sbml = join(dir, "two-stage.xml");
    await convertCommand.run(["examples/two-stage-reporter.circuit.json", "--to", "sbml", "--out", sbml]);
    expect(readFileSync(sbml, "utf8")).toMatch(/^<\?xml version="1.0" encoding="UTF-8"\?>\n<sbml xmlns="http:\/\/www.sbml.org\/sbml\/level3\/version2\/core"/);
    expect(await run(analyzeCommand, sbml)).toBe(await run(analyzeCommand, "examples/two-stage-reporter.circuit.json"));
    const back = await run(convertCommand, sbml, "--to", "circuit");
    expect(JSON.parse(back)).toEqual(JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8")));
  });

  it("convert of a bad SBML file exits 2 with the sbml: message", async () => {
    const file = join(dir, "bad.xml");
    writeFileSync(file, readFileSync("tests/fixtures/sbml-l3v1-gene.xml", "utf8").replace("<ci> leak </ci>", "<ci> Kc </ci>"));
    expect(await failure(convertCommand, file, "--to", "circuit")).toEqual({ code: 2, message: 'sbml: reaction "make_R" kineticLaw: unknown symbol "Kc"' });
  });

  it("convert requires --to sbml|circuit and has --help text", async () => {
    expect(await failure(convertCommand, "examples/birth-death.circuit.json")).toEqual({ code: 2, message: "--to: is required (sbml or circuit)" });
    expect((await failure(convertCommand, "examples/birth-death.circuit.json", "--to", "xml")).code).toBe(2);
    expect(convertCommand.help).toMatch(/^Usage: convert <file> --to sbml\|circuit/);
    expect(analyzeCommand.help).toMatch(/^Usage: analyze <file>/);
  });
});
