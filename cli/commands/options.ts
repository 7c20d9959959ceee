/**
 * Flags shared by `simulate` and `trajectory`, parsed into the run options schema
 * (lib/schemas/run-options.ts CliRunOptions) so the CLI, the API and the worker accept the same
 * values, and mapped to the engine's options by the same function (toEngineOptions).
 */
import { randomInt } from "node:crypto";

import { checkOverridesWith, CircuitError, formatPath } from "@/lib/schemas/circuit-rules";
import { CliRunOptions, CliThreads, toEngineOptions } from "@/lib/schemas/run-options";
import type { EngineOptions } from "@/ssa/engine-options";
import type { Circuit } from "@/ssa/types";

import { CliError, formulaCheckerFor, numberFlag, overridesFlag, type FlagSpec, type ParsedFlags } from "../common";

export const RUN_FLAGS: FlagSpec = {
  method: "string",
  "t-end": "string",
  dt: "string",
  runs: "string",
  seed: "string",
  "burn-in": "string",
  set: "list",
  units: "string",
  "tau-epsilon": "string",
  threads: "string",
  out: "string",
};

export const RUN_FLAGS_HELP = `  --method ode|ssa|tau   simulation method (default ssa)
  --t-end T              end time, in the circuit's time unit (required)
  --dt D                 sampling grid step: 0, D, 2D, ..., T (default T/100)
  --runs N               cells in the ensemble (default 1; ignored for ode)
  --seed S               integer seed (default: random, printed in the output)
  --burn-in B            time before which stationary statistics and periods ignore samples (default T/5)
  --set name=value       override a parameter (repeatable)
  --units molecules|model  output units (default molecules for ssa/tau, model for ode)
  --tau-epsilon E        tau-leaping step control: propensities may change by about E per leap
                         (default 0.05; 0.03 is Cao, Gillespie & Petzold's value; at most 0.2;
                         only with --method tau)
  --threads K            worker threads (default: all cores)
  --out FILE             write the JSON there instead of stdout`;

/** The flag of each field of the schema, for messages. */
const FLAG_OF: Record<string, string> = {
  method: "--method",
  t_end: "--t-end",
  dt: "--dt",
  runs: "--runs",
  seed: "--seed",
  burn_in: "--burn-in",
  overrides: "--set",
  units: "--units",
  tau_epsilon: "--tau-epsilon",
};

/** A zod failure as the one-line message of the flag it is about. */
function flagError(issue: { path: readonly PropertyKey[]; message: string } | undefined): CliError {
  const [head, ...tail] = issue?.path ?? [];
  const flag = FLAG_OF[String(head)] ?? String(head);
  return new CliError(`${flag}${tail.length ? " " + formatPath(tail) : ""}: ${issue?.message ?? "invalid"}`);
}

/**
 * Validated engine options from flags, with the thread count; draws a random seed when none is
 * given. --runs is ignored for ode (a trace is one path).
 * @throws CliError exit 2.
 */
export async function runOptionsFromFlags(flags: ParsedFlags, circuit: Circuit): Promise<EngineOptions & { seed: number; threads?: number }> {
  const tEnd = numberFlag(flags, "t-end");
  if (tEnd === undefined) throw new CliError("--t-end: is required");
  const method = (flags.values.method as string | undefined) ?? "ssa";
  const raw = {
    method,
    t_end: tEnd,
    dt: numberFlag(flags, "dt") ?? (tEnd > 0 ? tEnd / 100 : undefined),
    runs: method === "ode" ? undefined : (numberFlag(flags, "runs") ?? 1),
    seed: numberFlag(flags, "seed"),
    burn_in: numberFlag(flags, "burn-in"),
    overrides: overridesFlag(flags),
    units: flags.values.units as string | undefined,
    tau_epsilon: numberFlag(flags, "tau-epsilon"),
  };
  const res = CliRunOptions.safeParse(Object.fromEntries(Object.entries(raw).filter(([, v]) => v !== undefined)));
  if (!res.success) throw flagError(res.error.issues[0]);
  const threadsFlag = numberFlag(flags, "threads");
  const threads = threadsFlag === undefined ? undefined : CliThreads.safeParse(threadsFlag);
  if (threads && !threads.success) throw new CliError(`--threads: ${threads.error.issues[0]?.message ?? "invalid"}`);
  try {
    checkOverridesWith(circuit, res.data.overrides, await formulaCheckerFor(circuit));
  } catch (e) {
    if (e instanceof CircuitError) throw new CliError(e.message.replace(/^overrides\./, "--set "));
    throw e;
  }
  const seed = res.data.seed ?? randomInt(0, 2 ** 32);
  return { ...toEngineOptions({ ...res.data, seed }), seed, ...(threads ? { threads: threads.data } : {}) };
}
