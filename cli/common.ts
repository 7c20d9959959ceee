/**
 * Shared pieces of the command line: flag parsing, reading circuit files, writing JSON, and the
 * error type that carries an exit code (2 bad input, 1 tool failure; CONTRACT.md §2).
 */
import { readFileSync, writeFileSync } from "node:fs";

import { CircuitError, hasFormulas, noFormulas, parseCircuitWith, type FormulaChecker } from "@/lib/schemas/circuit-rules";
import type { Circuit } from "@/ssa/types";
import type { EngineWarning } from "@/ssa/warnings";

/**
 * The formula parser when the document has `expression` laws, else a stub: the parser (mathjs)
 * costs about a second and 70 MB to load, which a circuit without formulas never pays.
 */
export async function formulaCheckerFor(json: unknown): Promise<FormulaChecker> {
  return hasFormulas(json) ? (await import("@/ssa/expr")).parseExpression : noFormulas;
}

/** An error the dispatcher prints as one line and exits with `exitCode`. */
export class CliError extends Error {
  constructor(
    message: string,
    readonly exitCode: 1 | 2 = 2,
  ) {
    super(message);
    this.name = "CliError";
  }
}

export type FlagKind = "string" | "number" | "boolean" | "list";
export type FlagSpec = Record<string, FlagKind>;
export type ParsedFlags = {
  positional: string[];
  values: Record<string, string | boolean | string[] | undefined>;
};

/**
 * Parses `--name value`, `--name=value` and boolean `--name`; `list` flags repeat.
 * @throws CliError (exit 2) for an unknown flag or a missing value.
 */
export function parseFlags(argv: string[], spec: FlagSpec, command: string): ParsedFlags {
  const values: ParsedFlags["values"] = {};
  const positional: string[] = [];
  for (let k = 0; k < argv.length; k++) {
    const arg = argv[k] as string;
    if (arg === "--") {
      positional.push(...argv.slice(k + 1));
      break;
    }
    if (!arg.startsWith("--") || arg === "-") {
      if (arg.startsWith("-") && arg !== "-" && !/^-\d/.test(arg)) {
        throw new CliError(`${arg}: unknown option (see \`${command} --help\`)`);
      }
      positional.push(arg);
      continue;
    }
    const eq = arg.indexOf("=");
    const name = eq >= 0 ? arg.slice(2, eq) : arg.slice(2);
    const kind = spec[name];
    if (!kind) throw new CliError(`--${name}: unknown option (see \`${command} --help\`)`);
    if (kind === "boolean") {
      if (eq >= 0) throw new CliError(`--${name}: takes no value`);
      values[name] = true;
      continue;
    }
    let value: string;
    if (eq >= 0) value = arg.slice(eq + 1);
    else {
      const next = argv[k + 1];
      if (next === undefined || (next.startsWith("--") && next.length > 2)) throw new CliError(`--${name}: needs a value`);
      value = next;
      k++;
    }
    if (kind === "list") {
      const list = (values[name] as string[] | undefined) ?? [];
      list.push(value);
      values[name] = list;
    } else {
      if (values[name] !== undefined) throw new CliError(`--${name}: given more than once`);
      values[name] = value;
    }
  }
  return { positional, values };
}

/** A numeric flag as a number (undefined when absent). @throws CliError naming the flag. */
export function numberFlag(flags: ParsedFlags, name: string): number | undefined {
  const v = flags.values[name];
  if (v === undefined) return undefined;
  const s = String(v).trim();
  const n = s === "" ? NaN : Number(s);
  if (!Number.isFinite(n)) throw new CliError(`--${name}: must be a number, got "${String(v)}"`);
  return n;
}

/** `--set name=value` pairs. @throws CliError naming the flag. */
export function overridesFlag(flags: ParsedFlags): Record<string, number> | undefined {
  const list = flags.values["set"] as string[] | undefined;
  if (!list) return undefined;
  const out: Record<string, number> = {};
  for (const item of list) {
    const eq = item.indexOf("=");
    const name = eq > 0 ? item.slice(0, eq).trim() : "";
    const raw = eq > 0 ? item.slice(eq + 1).trim() : "";
    if (!name || raw === "") throw new CliError(`--set: expected name=value, got "${item}"`);
    const value = Number(raw);
    if (!Number.isFinite(value)) throw new CliError(`--set ${name}: must be a finite number, got "${raw}"`);
    out[name] = value;
  }
  return out;
}

/** A circuit read from a file, with the SBML import's warnings ([] for a circuit file). */
export interface ReadCircuit {
  circuit: Circuit;
  warnings: EngineWarning[];
}

/**
 * Reads and validates a circuit file (JSON; SBML when the text starts with "<").
 * @throws CliError exit 2 naming the file or the bad field.
 */
export async function readCircuit(path: string | undefined, command: string): Promise<Circuit> {
  return (await readCircuitFile(path, command)).circuit;
}

/**
 * readCircuit with the SBML import's warnings, which the commands join to their result's.
 * @throws CliError exit 2 naming the file or the bad field.
 */
export async function readCircuitFile(path: string | undefined, command: string): Promise<ReadCircuit> {
  if (!path) throw new CliError(`<file>: a circuit file is required (see \`${command} --help\`)`);
  let text: string;
  try {
    text = readFileSync(path, "utf8");
  } catch (e) {
    const code = (e as { code?: string }).code;
    throw new CliError(`${path}: ${code === "ENOENT" ? "no such file" : code === "EISDIR" ? "is a directory" : "cannot be read"}`);
  }
  if (text.trimStart().startsWith("<")) return readSbml(text, path);
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new CliError(`${path}: not valid JSON (${(e as Error).message})`);
  }
  const checker = await formulaCheckerFor(json);
  try {
    return { circuit: parseCircuitWith(json, checker), warnings: [] };
  } catch (e) {
    if (e instanceof CircuitError) throw new CliError(e.message);
    throw e;
  }
}

/** Wall-clock budget of one SBML import (the import's own bounds keep hostile files to milliseconds). */
export const SBML_IMPORT_BUDGET_MS = 10_000;

/** SBML import lives in ssa/sbml.ts (deterministic side); loaded only for SBML input. */
async function readSbml(text: string, path: string): Promise<ReadCircuit> {
  const { sbmlToCircuit } = await import("../ssa/sbml");
  try {
    const { circuit: json, warnings } = sbmlToCircuit(text, { timeBudget: { ms: SBML_IMPORT_BUDGET_MS, now: () => performance.now() } });
    return { circuit: parseCircuitWith(json, await formulaCheckerFor(json)), warnings };
  } catch (e) {
    if (e instanceof CircuitError) throw new CliError(e.message);
    const msg = e instanceof Error ? e.message : String(e);
    throw new CliError(msg.includes(":") ? msg : `${path}: ${msg}`);
  }
}

/**
 * Writes a result with its warnings: `warnings` (the file's import warnings first, then the
 * result's own) as the last key of the JSON, always present, and one `warning: <code>: <message>`
 * line each on stderr, so a person sees them even when the JSON goes to a file.
 */
export function writeResult<T extends { warnings: EngineWarning[] }>(result: T, importWarnings: EngineWarning[], out: string | undefined): void {
  const { warnings, ...rest } = result;
  const all = [...importWarnings, ...warnings];
  printWarnings(all);
  writeJson({ ...rest, warnings: all }, out);
}

/** One `warning: <code>: <message>` line per warning on stderr. */
export function printWarnings(warnings: readonly EngineWarning[]): void {
  for (const w of warnings) process.stderr.write(`warning: ${w.code}: ${w.message}\n`);
}

/** Writes a result as JSON to `--out` or stdout. @throws CliError exit 1 when the file cannot be written. */
export function writeJson(value: unknown, out: string | undefined): void {
  const text = JSON.stringify(value) + "\n";
  if (!out || out === "-") {
    process.stdout.write(text);
    return;
  }
  try {
    writeFileSync(out, text);
  } catch (e) {
    throw new CliError(`--out ${out}: cannot write (${(e as { code?: string }).code ?? (e as Error).message})`, 1);
  }
}

/** A command module: one file in cli/commands/ exporting `command`. */
export interface Command {
  /** One line for the command list. */
  summary: string;
  /** Full `--help` text. */
  help: string;
  run(argv: string[]): Promise<void>;
}
