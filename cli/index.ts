/**
 * `npm run --silent cli -- <command> [options]` (CONTRACT.md §2). Each command is a module in
 * cli/commands/ exporting `command: Command` (cli/common.ts). To add one, create the file and add a
 * line to COMMANDS below; nothing else changes. Errors become one line on stderr: exit 2 for bad
 * input, 1 for a failure of the tool, never a stack trace.
 */
import { CircuitError } from "@/lib/schemas/circuit-rules";
import { ModelInputError } from "@/ssa/types";

import { CliError, type Command } from "./common";

const COMMANDS: Record<string, () => Promise<{ command: Command }>> = {
  simulate: () => import("./commands/simulate"),
  trajectory: () => import("./commands/trajectory"),
  bench: () => import("./commands/bench"),
  analyze: () => import("./commands/analyze"),
  convert: () => import("./commands/convert"),
};

async function loadCommand(name: string): Promise<Command> {
  const load = COMMANDS[name];
  if (!load) throw new CliError(`${name}: unknown command (commands: ${Object.keys(COMMANDS).join(", ")})`);
  try {
    return (await load()).command;
  } catch (e) {
    if ((e as { code?: string }).code === "ERR_MODULE_NOT_FOUND") throw new CliError(`${name}: not available in this build`, 1);
    throw e;
  }
}

async function usage(): Promise<string> {
  const lines = ["Usage: npm run --silent cli -- <command> [options]", "", "Commands:"];
  for (const name of Object.keys(COMMANDS)) {
    let summary = "";
    try {
      summary = (await loadCommand(name)).summary;
    } catch {
      summary = "(not available in this build)";
    }
    lines.push(`  ${name.padEnd(11)} ${summary}`);
  }
  lines.push("", "Run `<command> --help` for its options. Output is JSON, to --out FILE or stdout.");
  return lines.join("\n") + "\n";
}

/** Maps an error to its exit code and one-line message. */
export function describeError(e: unknown): { code: 1 | 2; message: string } {
  if (e instanceof CliError) return { code: e.exitCode, message: e.message };
  if (e instanceof CircuitError || e instanceof ModelInputError) return { code: 2, message: e.message };
  const msg = e instanceof Error ? e.message : String(e);
  return { code: 1, message: `internal error: ${msg.split("\n")[0]}` };
}

async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === "--help" || name === "-h" || name === "help") {
    process.stdout.write(await usage());
    return name ? 0 : 2;
  }
  const cmd = await loadCommand(name);
  if (rest.includes("--help") || rest.includes("-h")) {
    process.stdout.write(cmd.help.endsWith("\n") ? cmd.help : cmd.help + "\n");
    return 0;
  }
  await cmd.run(rest);
  return 0;
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (e: unknown) => {
    const { code, message } = describeError(e);
    process.stderr.write(`${message}\n`);
    process.exitCode = code;
  },
);
