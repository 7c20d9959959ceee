import { z } from "zod";

import { IdField } from "@/lib/schemas/api";
import { RUN_LIMITS } from "@/lib/schemas/runs";

/** Limits of a comparison (API and pages). */
export const COMPARISON_LIMITS = {
  minDesigns: 2,
  /** Designs per comparison: each is one ensemble; a 5×5 grid is one too many. */
  maxDesigns: 24,
  /** Bootstrap replicates of every interval (Efron & Tibshirani: at least 1000 for percentiles). */
  replicates: 2000,
  /** Coverage of every interval. */
  level: 0.95,
} as const;

const finite = (what = "a finite number") => z.number({ error: `must be ${what}` }).finite(`must be ${what}`);
const positive = () => z.number({ error: "must be a positive number" }).positive("must be > 0").finite("must be finite");

const Overrides = z.record(z.string(), finite());
const ParameterName = z.string({ error: "must be a parameter name" }).trim().min(1, "must be a parameter name").max(64, "at most 64 characters");

/** One axis of a sweep: listed values, or `points` values from `from` to `to` on a linear or log scale. */
export const SweepAxis = z.discriminatedUnion("scale", [
  z.strictObject({
    parameter: ParameterName,
    scale: z.literal("list"),
    values: z.array(finite(), { error: "must be a list of numbers" }).min(1, "must hold at least one value")
      .max(COMPARISON_LIMITS.maxDesigns, `at most ${COMPARISON_LIMITS.maxDesigns} values`),
  }),
  z.strictObject({
    parameter: ParameterName,
    scale: z.enum(["linear", "log"]),
    from: finite(),
    to: finite(),
    points: z.number({ error: "must be an integer" }).int("must be an integer").min(2, "must be >= 2")
      .max(COMPARISON_LIMITS.maxDesigns, `at most ${COMPARISON_LIMITS.maxDesigns}`),
  }),
], { error: 'scale: must be "list", "linear" or "log"' }).superRefine((a, ctx) => {
  if (a.scale === "log") {
    if (!(a.from > 0)) ctx.addIssue({ code: "custom", path: ["from"], message: "must be > 0 on a log range" });
    if (!(a.to > 0)) ctx.addIssue({ code: "custom", path: ["to"], message: "must be > 0 on a log range" });
  }
  if (a.scale !== "list" && a.from === a.to) ctx.addIssue({ code: "custom", path: ["to"], message: "must differ from from" });
});
export type SweepAxis = z.infer<typeof SweepAxis>;

/** A sweep: one base version (with optional fixed overrides) and one axis, or two for a grid. */
export const Sweep = z.strictObject({
  version_id: IdField,
  overrides: Overrides.optional(),
  axes: z.array(SweepAxis, { error: "must be a list of one or two axes" }).min(1, "must hold one or two axes").max(2, "at most two axes (a grid)"),
}).superRefine((s, ctx) => {
  if (s.axes.length === 2 && s.axes[0]?.parameter === s.axes[1]?.parameter) {
    ctx.addIssue({ code: "custom", path: ["axes", 1, "parameter"], message: "must differ from the first axis' parameter" });
  }
});
export type Sweep = z.infer<typeof Sweep>;

export const DesignInput = z.strictObject({
  label: z.string().trim().min(1, "must not be empty").max(80, "at most 80 characters").optional(),
  version_id: IdField,
  overrides: Overrides.optional(),
});
export type DesignInput = z.infer<typeof DesignInput>;

/** Settings shared by every design's ensemble, in model time units. */
export const ComparisonSettings = z.strictObject({
  method: z.enum(["ssa", "tau"], { error: 'must be "ssa" or "tau"' }).default("ssa"),
  t_end: positive(),
  dt: positive(),
  runs: z.number({ error: "must be a positive integer" }).int("must be a positive integer").min(10, "must be >= 10 (intervals resample cells)")
    .max(RUN_LIMITS.maxCells, `at most ${RUN_LIMITS.maxCells} cells per design`),
  burn_in: z.number({ error: "must be a number" }).nonnegative("must be >= 0").optional(),
  seed: z.number({ error: "must be an integer" }).int("must be an integer").min(0, "must be >= 0")
    .max(Number.MAX_SAFE_INTEGER - COMPARISON_LIMITS.maxDesigns, "must be below 2^53 - 24").optional(),
  /** Every design with the same seed (common random numbers), which sharpens differences. */
  common_seed: z.boolean({ error: "must be true or false" }).default(false),
}).superRefine((b, ctx) => {
  if (b.dt > b.t_end) ctx.addIssue({ code: "custom", path: ["dt"], message: `must be <= t_end (${b.t_end})` });
  else if (Math.floor(b.t_end / b.dt) + 1 > RUN_LIMITS.maxGridPoints) {
    ctx.addIssue({ code: "custom", path: ["dt"], message: `gives more than ${RUN_LIMITS.maxGridPoints} grid points; use a larger dt` });
  }
  if (b.burn_in !== undefined && b.burn_in >= b.t_end) ctx.addIssue({ code: "custom", path: ["burn_in"], message: `must be < t_end (${b.t_end})` });
});
export type ComparisonSettings = z.infer<typeof ComparisonSettings>;

/** `POST /api/comparisons`: designs listed one by one, or a sweep, and the shared settings. */
export const ComparisonCreate = z.strictObject({
  lab_id: IdField,
  name: z.string({ error: "must be a name" }).trim().min(1, "must not be empty").max(200, "at most 200 characters"),
  description: z.string().trim().max(2000, "at most 2000 characters").optional(),
  designs: z.array(DesignInput, { error: "must be a list of designs" }).optional(),
  sweep: Sweep.optional(),
  settings: ComparisonSettings,
  /** Launch the ensembles at once (otherwise the comparison waits as a draft). */
  launch: z.boolean({ error: "must be true or false" }).default(false),
}).superRefine((b, ctx) => {
  if ((b.designs === undefined) === (b.sweep === undefined)) {
    ctx.addIssue({ code: "custom", path: ["designs"], message: "send exactly one of designs or sweep" });
    return;
  }
  const n = b.designs ? b.designs.length : sweepSize(b.sweep!);
  const path = b.designs ? ["designs"] : ["sweep", "axes"];
  if (n > COMPARISON_LIMITS.maxDesigns) {
    ctx.addIssue({ code: "custom", path, message: `gives ${n} designs; at most ${COMPARISON_LIMITS.maxDesigns} per comparison` });
  } else if (n < COMPARISON_LIMITS.minDesigns) {
    ctx.addIssue({ code: "custom", path, message: `gives ${n} design; a comparison needs at least ${COMPARISON_LIMITS.minDesigns}` });
  }
});
export type ComparisonCreate = z.infer<typeof ComparisonCreate>;

export const ComparisonListQuery = z.object({
  lab_id: IdField,
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).max(1_000_000).default(0),
});

/** `GET /api/comparisons/:id/test`: which designs (ids) and species; B is the one hoped to be less noisy. */
export const ComparisonTestQuery = z.object({
  a: IdField,
  b: IdField,
  species: z.string().trim().min(1, "must name a species").max(64),
});

/** `GET /api/comparisons/:id/bands`: one species' bands of every design. */
export const ComparisonBandsQuery = z.object({
  species: z.string().trim().min(1, "must name a species").max(64),
  points: z.coerce.number().int().min(10).max(2000).default(300),
});

/** Values along one axis, in order (log ranges geometric); rounded to 12 significant digits. */
export function axisValues(a: SweepAxis): number[] {
  if (a.scale === "list") return [...a.values];
  const out: number[] = [];
  for (let i = 0; i < a.points; i++) {
    const f = i / (a.points - 1);
    const v = a.scale === "log" ? a.from * Math.pow(a.to / a.from, f) : a.from + (a.to - a.from) * f;
    out.push(i === 0 ? a.from : i === a.points - 1 ? a.to : Number(v.toPrecision(12)));
  }
  return out;
}

export function sweepSize(s: Pick<Sweep, "axes">): number {
  return s.axes.reduce((n, a) => n * (a.scale === "list" ? a.values.length : a.points), 1);
}

/** The designs a sweep generates: the first axis outermost; each design's swept values and label. */
export function sweepDesigns(s: Pick<Sweep, "axes">): { values: Record<string, number>; label: string }[] {
  let rows: Record<string, number>[] = [{}];
  for (const a of s.axes) rows = rows.flatMap((r) => axisValues(a).map((v) => ({ ...r, [a.parameter]: v })));
  return rows.map((values) => ({ values, label: Object.entries(values).map(([k, v]) => `${k} = ${formatValue(v)}`).join(", ") }));
}

/** A parameter value as a label shows it: up to 4 significant digits, no trailing zeros. */
export function formatValue(v: number): string {
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(3).replace(/\.?0+e/, "e");
  return String(Number(v.toPrecision(4)));
}
