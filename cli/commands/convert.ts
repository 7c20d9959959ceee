/** `convert <file> --to sbml|circuit`: SBML Level 3 Version 2 out of a circuit, or a circuit file out of SBML. */
import { readFileSync, writeFileSync } from "node:fs";

import { CircuitError, parseCircuit } from "@/lib/schemas/circuit";
import { isSbmlText, SbmlError, sbmlToCircuit } from "@/ssa/sbml";
import { circuitToSbml } from "@/ssa/sbml-export";
import type { Circuit } from "@/ssa/types";

import { CliError, parseFlags, printWarnings, SBML_IMPORT_BUDGET_MS, type Command } from "../common";

export const command: Command = {
  summary: "write a circuit as SBML Level 3 Version 2, or an SBML file as a circuit file",
  help: `Usage: convert <file> --to sbml|circuit [--out FILE]

Reads a circuit file (JSON) or an SBML Level 2/3 core file (detected by its first character "<")
and writes it
  --to sbml      as SBML Level 3 Version 2 (one compartment of volume_fL, MathML kinetic laws,
                 unit definitions; each reaction keeps its rate law in an annotation so that
                 converting back gives the same circuit)
  --to circuit   as a circuit file (burstwise.circuit/1, pretty-printed JSON)

Options:
  --to sbml|circuit  output format (required)
  --out FILE         write there instead of stdout

SBML import notes (approximations, dropped parts) go to stderr as "warning: <code>: <message>" lines.
Exit codes: 0 success, 2 bad input (the message names the element or field), 1 failure of the tool.`,
  async run(argv) {
    const flags = parseFlags(argv, { to: "string", out: "string" }, "convert");
    const to = flags.values.to as string | undefined;
    if (to === undefined) throw new CliError("--to: is required (sbml or circuit)");
    if (to !== "sbml" && to !== "circuit") throw new CliError(`--to: must be "sbml" or "circuit", got "${to}"`);
    const path = flags.positional[0];
    if (flags.positional.length > 1) throw new CliError(`${flags.positional[1]}: unexpected argument (see \`convert --help\`)`);
    const circuit = loadCircuitFile(path);
    const text = to === "sbml" ? circuitToSbml(circuit) : JSON.stringify(circuit, null, 2) + "\n";
    const out = flags.values.out as string | undefined;
    if (!out || out === "-") {
      process.stdout.write(text);
      return;
    }
    try {
      writeFileSync(out, text);
    } catch (e) {
      throw new CliError(`--out ${out}: cannot write (${(e as { code?: string }).code ?? (e as Error).message})`, 1);
    }
  },
};

/**
 * Reads a circuit file or an SBML file into a validated circuit; SBML import warnings go to stderr.
 * @throws CliError exit 2 naming the file, the SBML element or the circuit field.
 */
export function loadCircuitFile(path: string | undefined): Circuit {
  if (!path) throw new CliError("<file>: a circuit or SBML file is required (see `convert --help`)");
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    const code = (e as { code?: string }).code;
    throw new CliError(`${path}: ${code === "ENOENT" ? "no such file" : code === "EISDIR" ? "is a directory" : "cannot be read"}`);
  }
  try {
    if (isSbmlText(text)) {
      const imported = sbmlToCircuit(text, { timeBudget: { ms: SBML_IMPORT_BUDGET_MS, now: () => performance.now() } });
      printWarnings(imported.warnings);
      return parseCircuit(imported.circuit);
    }
    let json: unknown;
    try {
      json = JSON.parse(text);
    } catch (e) {
      throw new CliError(`${path}: not valid JSON (${(e as Error).message})`);
    }
    return parseCircuit(json);
  } catch (e) {
    if (e instanceof SbmlError || e instanceof CircuitError) throw new CliError(e.message);
    throw e;
  }
}
