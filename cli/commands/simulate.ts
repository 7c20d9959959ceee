/** `simulate <file>`: one run, as the JSON of CONTRACT.md §2. */
import { defaultThreads, simulateRun } from "@/ssa/node/run-engine";

import { parseFlags, readCircuitFile, writeResult, type Command } from "../common";
import { RUN_FLAGS, RUN_FLAGS_HELP, runOptionsFromFlags } from "./options";

export const command: Command = {
  summary: "one run (ode, or an ssa/tau ensemble): means, SDs, quantiles, noise and periods as JSON",
  help: `Usage: simulate <file> [options]

Simulates a circuit file (or SBML file) and prints the statistics as JSON. Its "warnings"
(the SBML import's, then the run's) are also printed on stderr, one "warning: <code>: <message>"
line each.

Options:
${RUN_FLAGS_HELP}

Exit codes: 0 success, 2 bad input (the message names the field), 1 failure of the tool.`,
  async run(argv) {
    const flags = parseFlags(argv, RUN_FLAGS, "simulate");
    const { circuit, warnings } = await readCircuitFile(flags.positional[0], "simulate");
    const o = await runOptionsFromFlags(flags, circuit);
    // The same entry point as the background worker's steps (ssa/node/run-engine.ts).
    const summary = await simulateRun(circuit, { ...o, threads: o.threads ?? defaultThreads() });
    writeResult(summary, warnings, flags.values.out as string | undefined);
  },
};
