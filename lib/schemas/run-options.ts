/**
 * The one options schema of a run (method, grid, cells, seed, burn-in, overrides, units, tau ε,
 * events per cell), in the API's snake_case. Parsed by the launch form and `POST /api/runs`
 * (RunLaunch), by the command line's `simulate` / `trajectory` flags (CliRunOptions, looser
 * limits), and from a stored run (`runs.settings` with its method and seed, runOptionsOfRun) when
 * the worker takes its job or the API replays a cell. toEngineOptions is the one mapping to the
 * engine's options (ssa/engine-options.ts). A new option (schedules of inputs, growth and
 * division, extrinsic noise) is a field of RUN_OPTION_FIELDS, a line of toEngineOptions and a
 * field of EngineOptions: the form, the route, the worker and the CLI then all carry it.
 * Isomorphic (the browser form imports it).
 */
import { z } from "zod";

import { IdField } from "@/lib/schemas/api";
import { RUN_LIMITS } from "@/lib/schemas/runs";
import type { EngineOptions } from "@/ssa/engine-options";
import { MAX_TAU_EPSILON, TAU_EPSILON } from "@/ssa/types";

/** Limits the options are checked against: the API's (RUN_LIMITS) or the command line's (CLI_RUN_LIMITS). */
export interface RunOptionLimits {
  maxCells: number;
  maxGridPoints: number;
  /** How cross-field messages name the end time: `t_end` in the API, `tEnd` on the command line. */
  tEndName: string;
}

/** The command line's limits: looser than the API's, since the user's own machine pays. */
export const CLI_RUN_LIMITS = { maxCells: 100_000, maxGridPoints: 1_000_001, tEndName: "tEnd", maxThreads: 256 } as const;
const API_LIMITS: RunOptionLimits = { maxCells: RUN_LIMITS.maxCells, maxGridPoints: RUN_LIMITS.maxGridPoints, tEndName: "t_end" };
/** A stored run was checked when it was launched; reading it back checks only its shape. */
const STORED_LIMITS: RunOptionLimits = { maxCells: Number.MAX_SAFE_INTEGER, maxGridPoints: Number.MAX_SAFE_INTEGER, tEndName: "t_end" };

const positive = (what: string) => z.number({ error: `must be ${what}` }).positive("must be > 0").finite("must be finite");

/** The fields of a run's options, with `limits`. */
function runOptionFields(limits: RunOptionLimits) {
  return {
    method: z.enum(["ode", "ssa", "tau"], { error: 'must be "ode", "ssa" or "tau"' }),
    t_end: positive("a positive number"),
    dt: positive("a positive number"),
    runs: z.number({ error: "must be a positive integer" }).int("must be a positive integer").min(1, "must be >= 1")
      .max(limits.maxCells, `at most ${limits.maxCells} cells per run`).optional(),
    seed: z.number({ error: "must be an integer" }).int("must be an integer").min(0, "must be >= 0")
      .max(Number.MAX_SAFE_INTEGER, "must be at most 2^53 - 1").optional(),
    burn_in: z.number({ error: "must be a number" }).nonnegative("must be >= 0").optional(),
    overrides: z.record(z.string(), z.number({ error: "must be a finite number" }).finite("must be a finite number")).optional(),
    units: z.enum(["molecules", "model"], { error: 'must be "molecules" or "model"' }).optional(),
    /** Leap tolerance ε of tau-leaping (ssa/tau.ts); default TAU_EPSILON (0.05), stored with the run. */
    tau_epsilon: z.number({ error: "must be a number" }).positive("must be > 0").max(MAX_TAU_EPSILON, `must be at most ${MAX_TAU_EPSILON}`).optional(),
  };
}

/** Set by the server when it stores a run (RUN_LIMITS.maxEventsPerCell), never by a launch; a replay of its cells keeps to it. */
const maxEventsField = z.number({ error: "must be a positive integer" }).int("must be a positive integer").positive("must be > 0").optional();

type Fields = z.infer<z.ZodObject<ReturnType<typeof runOptionFields>>>;

/** The rules across fields. */
function checkRunOptions(b: Fields, ctx: z.RefinementCtx, limits: RunOptionLimits): void {
  if (b.tau_epsilon !== undefined && b.method !== "tau") ctx.addIssue({ code: "custom", path: ["tau_epsilon"], message: 'applies only to method "tau"' });
  if (b.dt > b.t_end) ctx.addIssue({ code: "custom", path: ["dt"], message: `must be <= ${limits.tEndName} (${b.t_end})` });
  else if (Math.floor(b.t_end / b.dt) + 1 > limits.maxGridPoints) {
    ctx.addIssue({ code: "custom", path: ["dt"], message: `gives more than ${limits.maxGridPoints} grid points; use a larger dt` });
  }
  if (b.burn_in !== undefined && b.burn_in > b.t_end) ctx.addIssue({ code: "custom", path: ["burn_in"], message: `must be <= ${limits.tEndName} (${b.t_end})` });
  if (b.method === "ode" && b.runs !== undefined && b.runs !== 1) ctx.addIssue({ code: "custom", path: ["runs"], message: "must be 1 (or absent) for an ode trace" });
}

/** A run's options with the API's limits (and the stored events per cell). */
export const RunOptions = z.strictObject({ ...runOptionFields(API_LIMITS), max_events_per_cell: maxEventsField })
  .superRefine((b, ctx) => checkRunOptions(b, ctx, API_LIMITS));
export type RunOptions = z.infer<typeof RunOptions>;

/** `POST /api/runs` (CONTRACT.md §3) and the launch form: the version and the run's options, in model time units. */
export const RunLaunch = z.strictObject({ version_id: IdField, ...runOptionFields(API_LIMITS) })
  .superRefine((b, ctx) => checkRunOptions(b, ctx, API_LIMITS));
export type RunLaunch = z.infer<typeof RunLaunch>;

/** The options of `simulate` / `trajectory` from their flags (cli/commands/options.ts maps each flag to its field). */
export const CliRunOptions = z.strictObject(runOptionFields(CLI_RUN_LIMITS))
  .superRefine((b, ctx) => checkRunOptions(b, ctx, CLI_RUN_LIMITS));

/** `--threads`: how the command line spreads the cells, not an option of the run (the bytes do not depend on it). */
export const CliThreads = z.number({ error: "must be a positive integer" }).int("must be a positive integer").min(1, "must be >= 1")
  .max(CLI_RUN_LIMITS.maxThreads, `must be at most ${CLI_RUN_LIMITS.maxThreads}`);

const StoredRunOptions = z.object({ ...runOptionFields(STORED_LIMITS), max_events_per_cell: maxEventsField })
  .superRefine((b, ctx) => checkRunOptions(b, ctx, STORED_LIMITS));

/**
 * What a run stores as `runs.settings` (its method and seed are columns beside it): the options
 * as launched, with every default the run used written out, so a rerun matches whatever the
 * defaults become.
 */
export type RunSettings = Omit<RunOptions, "method" | "seed" | "runs" | "units"> & { runs: number; units: "molecules" | "model" };

/**
 * The settings a launch stores: cells (1 for a trace), units (the method's default), ε for tau
 * and the events per cell of an ensemble written out.
 */
export function settingsOf(o: Omit<RunLaunch, "version_id" | "seed">): RunSettings {
  const trace = o.method === "ode";
  return {
    t_end: o.t_end, dt: o.dt, runs: trace ? 1 : (o.runs ?? 1),
    ...(o.burn_in !== undefined ? { burn_in: o.burn_in } : {}),
    ...(o.overrides && Object.keys(o.overrides).length ? { overrides: o.overrides } : {}),
    units: o.units ?? (trace ? "model" : "molecules"),
    ...(o.method === "tau" ? { tau_epsilon: o.tau_epsilon ?? TAU_EPSILON } : {}),
    ...(!trace ? { max_events_per_cell: RUN_LIMITS.maxEventsPerCell } : {}),
  };
}

/**
 * A stored run's options, parsed back from its settings, method and seed. Runs stored before
 * their events per cell were get the limit they were queued under (RUN_LIMITS.maxEventsPerCell).
 * @throws ZodError when the stored settings are not a run's.
 */
export function runOptionsOfRun(run: { method: string; seed: number; kind: "trace" | "ensemble"; settings: RunSettings }): RunOptions {
  const o = StoredRunOptions.parse({ ...run.settings, method: run.method, ...(run.kind === "ensemble" ? { seed: run.seed } : {}) });
  return run.kind === "ensemble" ? { ...o, max_events_per_cell: o.max_events_per_cell ?? RUN_LIMITS.maxEventsPerCell } : o;
}

/** The one mapping of a run's options to the engine's (ssa/engine-options.ts). */
export function toEngineOptions(o: Omit<RunOptions, "max_events_per_cell"> & { max_events_per_cell?: number }): EngineOptions {
  return {
    method: o.method, tEnd: o.t_end, dt: o.dt,
    ...(o.runs !== undefined ? { runs: o.runs } : {}),
    ...(o.seed !== undefined ? { seed: o.seed } : {}),
    ...(o.burn_in !== undefined ? { burnIn: o.burn_in } : {}),
    ...(o.overrides !== undefined ? { overrides: o.overrides } : {}),
    ...(o.units !== undefined ? { units: o.units } : {}),
    ...(o.tau_epsilon !== undefined ? { tauEpsilon: o.tau_epsilon } : {}),
    ...(o.max_events_per_cell !== undefined ? { maxEventsPerCell: o.max_events_per_cell } : {}),
  };
}

/** The engine options of a stored run (runOptionsOfRun, then toEngineOptions). */
export const engineOptionsOfRun = (run: Parameters<typeof runOptionsOfRun>[0]): EngineOptions => toEngineOptions(runOptionsOfRun(run));

/** The launch body that runs a stored run again exactly: the same version, method, settings and (for an ensemble) seed. */
export function launchBodyOf(run: { version_id: string; method: "ode" | "ssa" | "tau"; kind: "trace" | "ensemble"; seed: number; settings: RunSettings }): z.input<typeof RunLaunch> {
  const { max_events_per_cell: _server, runs, ...s } = run.settings;
  return { version_id: run.version_id, method: run.method, ...s, ...(run.kind === "ensemble" ? { runs, seed: run.seed } : {}) };
}
