import { z } from "zod";

import { IdField } from "@/lib/schemas/api";

/** Limits of the API and worker; the CLI has its own, looser ones (lib/schemas/run-options.ts CLI_RUN_LIMITS). */
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
