import { z } from "zod";

/** A positive integer id in a JSON body or a query string (ids are strings in responses). */
export const IdField = z.union([z.number().int().positive(), z.string().regex(/^[1-9][0-9]{0,15}$/, "must be an id")], { error: "must be an id" })
  .transform((v) => String(v));

const Message = z.string().trim().max(500, "at most 500 characters").optional();

export const CircuitCreate = z.strictObject({
  lab_id: IdField,
  circuit: z.unknown().optional(),
  sbml: z.string().max(5_000_000, "at most 5 MB").optional(),
  message: Message,
}).superRefine((b, ctx) => {
  if ((b.circuit === undefined) === (b.sbml === undefined)) {
    ctx.addIssue({ code: "custom", path: ["circuit"], message: "send exactly one of circuit or sbml" });
  }
});

export const VersionCreate = z.strictObject({
  circuit: z.unknown().optional(),
  sbml: z.string().max(5_000_000, "at most 5 MB").optional(),
  message: Message,
}).superRefine((b, ctx) => {
  if ((b.circuit === undefined) === (b.sbml === undefined)) {
    ctx.addIssue({ code: "custom", path: ["circuit"], message: "send exactly one of circuit or sbml" });
  }
});

export const ListQuery = z.object({
  lab_id: IdField,
  q: z.string().max(200).optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).max(1_000_000).default(0),
});
