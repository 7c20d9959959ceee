import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

import { command as convertCommand } from "@/cli/commands/convert";
import { CliError } from "@/cli/common";

import { deepMathSbml, doublingChainSbml, splitEntitySbml } from "../support/hostile-sbml";

const dir = mkdtempSync(join(tmpdir(), "bw-cli-hostile-"));
const file = (name: string, text: string) => {
  const p = join(dir, name);
  writeFileSync(p, text);
  return p;
};

/** Runs `npm run cli -- …` as a user would (node + tsx). */
function cli(...args: string[]) {
  const r = spawnSync(process.execPath, ["scripts/cli.mjs", ...args], { encoding: "utf8", timeout: 60_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

async function convertFailure(path: string): Promise<{ code: number; message: string }> {
  try {
    await convertCommand.run([path, "--to", "circuit", "--out", join(dir, "out.json")]);
  } catch (e) {
    if (e instanceof CliError) return { code: e.exitCode, message: e.message };
    throw e;
  }
  throw new Error("expected convert to fail");
}

describe("the command line refuses hostile input with exit 2 and one line", () => {
  const chain = file("chain.xml", doublingChainSbml(29));

  it.each([["convert", "--to", "circuit"], ["simulate", "--t-end", "1", "--dt", "1"]])("%s of the doubling-chain SBML", (command, ...flags) => {
    const r = cli(command, chain, ...flags);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('sbml: functionDefinition "f9": expands to more than 2000 nodes\n');
    expect(r.stdout).toBe("");
  });

  it.each([
    ["MathML nested 150 deep", deepMathSbml(150), 'sbml: reaction "R1" kineticLaw: MathML nested more than 100 deep'],
    ["elements nested 300 deep", deepMathSbml(300), "sbml: elements nested more than 160 deep"],
    ["a split entity declaration", splitEntitySbml(), "sbml: line 2: <!DOCTYPE> declarations are not allowed (SBML needs no DOCTYPE or entity declarations)"],
  ])("convert of %s", async (_what, xml, message) => {
    expect(await convertFailure(file("hostile.xml", xml))).toEqual({ code: 2, message });
  });

  it("convert of a circuit file with a parameter __proto__", async () => {
    const text = '{"format":"burstwise.circuit/1","units":{"time":"s","amount":"molecules"},"species":[{"id":"A","initial":0}],'
      + '"parameters":{"__proto__":1,"k":1},"reactions":[{"id":"R","products":{"A":1},"rate":{"law":"mass_action","k":"k"}}]}';
    expect(await convertFailure(file("proto.circuit.json", text))).toEqual({
      code: 2,
      message: 'parameters.__proto__: "__proto__" is a reserved name (a property of every JavaScript object); choose another',
    });
  });
});
