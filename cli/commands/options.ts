/**
 * Flags shared by `simulate` and `trajectory`, parsed into the SimulateOptions schema
 * (lib/schemas/circuit.ts) so the CLI, the API and the worker accept the same values.
 */
import { randomInt } from "node:crypto";

import { checkOverridesWith, CircuitError, formatPath, SimulateOptions } from "@/lib/schemas/circuit-rules";
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

const FLAG_OF: Record<string, string> = {
  method: "--method",
  tEnd: "--t-end",
  dt: "--dt",
  runs: "--runs",
  seed: "--seed",
  burnIn: "--burn-in",
  overrides: "--set",
  units: "--units",
  tauEpsilon: "--tau-epsilon",
  threads: "--threads",
};

/** Validated run options from flags; draws a random seed when none is given. @throws CliError exit 2. */
export async function runOptionsFromFlags(flags: ParsedFlags, circuit: Circuit): Promise<SimulateOptions & { seed: number }> {
  const tEnd = numberFlag(flags, "t-end");
  if (tEnd === undefined) throw new CliError("--t-end: is required");
  const raw = {
    method: flags.values.method as string | undefined,
    tEnd,
    dt: numberFlag(flags, "dt") ?? (tEnd > 0 ? tEnd / 100 : undefined),
    runs: numberFlag(flags, "runs"),
    seed: numberFlag(flags, "seed"),
    burnIn: numberFlag(flags, "burn-in"),
    overrides: overridesFlag(flags),
    units: flags.values.units as string | undefined,
    tauEpsilon: numberFlag(flags, "tau-epsilon"),
    threads: numberFlag(flags, "threads"),
  };
  const res = SimulateOptions.safeParse(Object.fromEntries(Object.entries(raw).filter(([, v]) => v !== undefined)));
  if (!res.success) {
    const i = res.error.issues[0];
    const [head, ...tail] = i?.path ?? [];
    const flag = FLAG_OF[String(head)] ?? String(head);
    throw new CliError(`${flag}${tail.length ? " " + formatPath(tail) : ""}: ${i?.message ?? "invalid"}`);
  }
  try {
    checkOverridesWith(circuit, res.data.overrides, await formulaCheckerFor(circuit));
  } catch (e) {
    if (e instanceof CircuitError) throw new CliError(e.message.replace(/^overrides\./, "--set "));
    throw e;
  }
  return { ...res.data, seed: res.data.seed ?? randomInt(0, 2 ** 32) };
}
