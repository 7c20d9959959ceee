import { z } from "zod";

import { IdField } from "@/lib/schemas/api";

/** Upload limits (also stated on the Data page). */
export const DATASET_LIMITS = {
  /** Largest dataset file accepted, in bytes (10 MB). */
  maxFileBytes: 10 * 1024 * 1024,
  /** Largest circuit file (SBML or circuit JSON), in bytes: the JSON API's SBML limit. */
  maxCircuitFileBytes: 5 * 1024 * 1024,
  maxRows: 100_000,
  maxColumns: 50,
  /** rows × columns: keeps the parsed values (jsonb) within a few MB. */
  maxCells: 1_000_000,
} as const;

export const DatasetKind = z.enum(["series", "snapshot"]);
export type DatasetKind = z.infer<typeof DatasetKind>;
export const TimeUnit = z.enum(["s", "min", "h"]);
export type TimeUnit = z.infer<typeof TimeUnit>;

const emptyToUndefined = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);

/**
 * The text fields of POST /api/datasets (multipart form data; the file is the `file` field).
 * Amounts are in `amount_unit` (a label such as "a.u.", "nM" or "molecules"); each value
 * times `molecules_per_unit` is a molecule count (1 when the unit is molecules).
 */
export const DatasetUploadFields = z.strictObject({
  lab_id: IdField,
  kind: DatasetKind,
  name: z.string().trim().min(1, "is required").max(200, "at most 200 characters"),
  description: z.preprocess(emptyToUndefined, z.string().trim().max(2000, "at most 2000 characters").optional()),
  time_unit: z.preprocess(emptyToUndefined, TimeUnit.optional()),
  amount_unit: z.preprocess(emptyToUndefined, z.string().trim().min(1).max(40, "at most 40 characters").default("molecules")),
  molecules_per_unit: z.preprocess(emptyToUndefined, z.coerce.number({ error: "must be a number" })
    .refine(Number.isFinite, "must be a finite number").refine((x) => x > 0, "must be greater than 0").refine((x) => x <= 1e12, "at most 1e12").optional()),
}).superRefine((f, ctx) => {
  if (f.kind === "series" && !f.time_unit) ctx.addIssue({ code: "custom", path: ["time_unit"], message: "is required for a time series (s, min or h)" });
  if (f.kind === "snapshot" && f.time_unit) ctx.addIssue({ code: "custom", path: ["time_unit"], message: "a snapshot has no time column; leave it empty" });
  if (f.molecules_per_unit === undefined && !/^molecules?$/i.test(f.amount_unit)) {
    ctx.addIssue({ code: "custom", path: ["molecules_per_unit"], message: `is required when amounts are in "${f.amount_unit}" (how many molecules one unit is)` });
  }
}).transform((f) => ({ ...f, molecules_per_unit: f.molecules_per_unit ?? 1 }));
export type DatasetUploadFields = z.infer<typeof DatasetUploadFields>;

export const DatasetUnits = z.strictObject({
  time_unit: TimeUnit.nullable(),
  amount_unit: z.string().min(1).max(40),
  molecules_per_unit: z.number().positive().finite(),
});
export type DatasetUnits = z.infer<typeof DatasetUnits>;

const Finite = z.number().finite();

/**
 * The values parsed from a dataset file, as stored (jsonb) and served. `values[j]` is column
 * `columns[j]` (a reporter), in the file's own unit; `time` is the series' time column.
 */
export const ParsedDataset = z.discriminatedUnion("kind", [
  z.strictObject({
    kind: z.literal("series"),
    time_column: z.string().min(1),
    columns: z.array(z.string().min(1)).min(1),
    time: z.array(Finite.nonnegative()).min(1),
    values: z.array(z.array(Finite)).min(1),
  }),
  z.strictObject({
    kind: z.literal("snapshot"),
    columns: z.array(z.string().min(1)).min(1),
    values: z.array(z.array(Finite).min(2)).min(1),
  }),
]).superRefine((d, ctx) => {
  if (d.values.length !== d.columns.length) ctx.addIssue({ code: "custom", path: ["values"], message: "one array per column" });
  const n = d.kind === "series" ? d.time.length : d.values[0]?.length ?? 0;
  d.values.forEach((v, j) => {
    if (v.length !== n) ctx.addIssue({ code: "custom", path: ["values", j], message: `${v.length} values; expected ${n}` });
  });
  if (d.kind === "series") {
    for (let i = 1; i < d.time.length; i++) {
      if (!(d.time[i]! > d.time[i - 1]!)) {
        ctx.addIssue({ code: "custom", path: ["time", i], message: "times must increase" });
        break;
      }
    }
  }
});
export type ParsedDataset = z.infer<typeof ParsedDataset>;

/** Measured statistics of one reporter, in molecules (values × molecules_per_unit). */
export interface ColumnStats { column: string; n: number; mean: number; sd: number; cv: number | null; fano: number | null; min: number; max: number }

export const DatasetListQuery = z.object({ lab_id: IdField });
