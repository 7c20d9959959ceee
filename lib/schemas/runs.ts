import { z } from "zod";

import { IdField } from "@/lib/schemas/api";
import { MAX_TAU_EPSILON } from "@/ssa/types";

/** Limits of the API and worker; the CLI has its own, looser ones. */
export const RUN_LIMITS = {
  maxCells: 20_000,
  maxGridPoints: 100_001,
  maxQueuedPerLab: 20,
  /** Events one cell may fire before its run fails as a runaway (≈ seconds of CPU per cell). */
  maxEventsPerCell: 1e8,
  /** Cells per chunk: the unit of progress, retry and crash recovery. */
  chunkCells: 50,
  /** Sample cells stored with a finished ensemble for display. */
  sampleCells: 5,
  /** Values (grid points × species) one cell replay answers with; beyond, species= or every= choose fewer. */
  maxReplayValues: 1_000_000,
  /** Values one replay computes (the kernel records every species at every grid point): 160 MB of Float64. */
  maxReplayComputedValues: 20_000_000,
} as const;

const positive = (what: string) => z.number({ error: `must be ${what}` }).positive("must be > 0").finite("must be finite");

/** `POST /api/runs` (CONTRACT.md §3), in model time units. */
export const RunCreate = z.strictObject({
  version_id: IdField,
  method: z.enum(["ode", "ssa", "tau"], { error: 'must be "ode", "ssa" or "tau"' }),
  t_end: positive("a positive number"),
  dt: positive("a positive number"),
  runs: z.number({ error: "must be a positive integer" }).int("must be a positive integer").min(1, "must be >= 1")
    .max(RUN_LIMITS.maxCells, `at most ${RUN_LIMITS.maxCells} cells per run`).optional(),
  seed: z.number({ error: "must be an integer" }).int("must be an integer").min(0, "must be >= 0")
    .max(Number.MAX_SAFE_INTEGER, "must be at most 2^53 - 1").optional(),
  burn_in: z.number({ error: "must be a number" }).nonnegative("must be >= 0").optional(),
  overrides: z.record(z.string(), z.number({ error: "must be a finite number" }).finite("must be a finite number")).optional(),
  units: z.enum(["molecules", "model"], { error: 'must be "molecules" or "model"' }).optional(),
  /** Leap tolerance ε of tau-leaping (ssa/tau.ts); default TAU_EPSILON (0.05), stored with the run. */
  tau_epsilon: z.number({ error: "must be a number" }).positive("must be > 0").max(MAX_TAU_EPSILON, `must be at most ${MAX_TAU_EPSILON}`).optional(),
}).superRefine((b, ctx) => {
  if (b.tau_epsilon !== undefined && b.method !== "tau") ctx.addIssue({ code: "custom", path: ["tau_epsilon"], message: 'applies only to method "tau"' });
  if (b.dt > b.t_end) ctx.addIssue({ code: "custom", path: ["dt"], message: `must be <= t_end (${b.t_end})` });
  else if (Math.floor(b.t_end / b.dt) + 1 > RUN_LIMITS.maxGridPoints) {
    ctx.addIssue({ code: "custom", path: ["dt"], message: `gives more than ${RUN_LIMITS.maxGridPoints} grid points; use a larger dt` });
  }
  if (b.burn_in !== undefined && b.burn_in > b.t_end) ctx.addIssue({ code: "custom", path: ["burn_in"], message: `must be <= t_end (${b.t_end})` });
  if (b.method === "ode" && b.runs !== undefined && b.runs !== 1) ctx.addIssue({ code: "custom", path: ["runs"], message: "must be 1 (or absent) for an ode trace" });
});
export type RunCreate = z.infer<typeof RunCreate>;

/** What a run stores as its settings (snake_case, as the API shows them). */
export interface RunSettings {
  t_end: number; dt: number; runs: number; burn_in?: number; overrides?: Record<string, number>; units: "molecules" | "model";
  /** Tau-leaping runs store the ε they used, so that a rerun matches whatever the default becomes. */
  tau_epsilon?: number;
  /**
   * Events one cell may fire before the run fails as a runaway; a replay of its cells keeps to it.
   * Absent on runs stored before it was: they ran with RUN_LIMITS.maxEventsPerCell.
   */
  max_events_per_cell?: number;
}

const everyMessage = `must be a whole number from 1 to ${RUN_LIMITS.maxGridPoints}`;

/** Query of `GET /api/runs/:id/cells/:index`: which species (comma-separated) and every how many grid points. */
export const CellQuery = z.object({
  species: z.string().trim().min(1, "name at least one species, e.g. species=A,B").max(100_000, "too long").optional(),
  every: z.string().regex(/^[1-9][0-9]{0,5}$/, everyMessage).transform(Number)
    .refine((n) => n <= RUN_LIMITS.maxGridPoints, everyMessage).optional(),
});
export type CellQuery = z.infer<typeof CellQuery>;

export const RUN_STATUSES = ["queued", "running", "succeeded", "failed", "cancelled"] as const;

export const RunListQuery = z.object({
  lab_id: IdField,
  status: z.enum(RUN_STATUSES).optional(),
  version_id: IdField.optional(),
  circuit_id: IdField.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).max(1_000_000).default(0),
});
