/** `trajectory <file> --seed S --index I`: cell I of the `simulate --seed S` ensemble, replayed alone. */
import { replayCell } from "@/ssa/node/run-engine";

import { CliError, numberFlag, parseFlags, readCircuitFile, writeResult, type Command } from "../common";
import { RUN_FLAGS, RUN_FLAGS_HELP, runOptionsFromFlags } from "./options";

export const command: Command = {
  summary: "replay cell I of the ensemble that `simulate --seed S` draws, and print its path",
  help: `Usage: trajectory <file> --seed S --index I [options]

Replays cell I (0-based) of the ensemble drawn with seed S, alone, and prints its sampled path.
The path depends only on (S, I): it equals cell I of \`simulate --seed S --runs N\` for any N > I.

Options:
  --index I              cell index (required)
${RUN_FLAGS_HELP}
(--runs and --threads are accepted and ignored; --method must be ssa or tau.)
Warnings go into the JSON's "warnings" and on stderr, one "warning: <code>: <message>" line each.

Exit codes: 0 success, 2 bad input (the message names the field), 1 failure of the tool.`,
  async run(argv) {
    const flags = parseFlags(argv, { ...RUN_FLAGS, index: "string" }, "trajectory");
    const { circuit, warnings } = await readCircuitFile(flags.positional[0], "trajectory");
    if (flags.values.seed === undefined) throw new CliError("--seed: is required");
    const index = numberFlag(flags, "index");
    if (index === undefined) throw new CliError("--index: is required");
    if (!Number.isSafeInteger(index) || index < 0) throw new CliError("--index: must be a non-negative integer");
    const o = await runOptionsFromFlags(flags, circuit);
    if (o.method === "ode") throw new CliError(`--method: must be "ssa" or "tau" for a trajectory`);
    const result = await replayCell(circuit, o, index);
    writeResult(result, warnings, flags.values.out as string | undefined);
  },
};
