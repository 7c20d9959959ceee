/**
 * The circuit file `burstwise.circuit/1` (CONTRACT.md §1) as zod
 * schemas. Isomorphic: used by the API, the worker, the browser form and the command line.
 * Every rejection names the field: `reactions[3].rate.K: unknown parameter "Kc"`.
 * The rules live in circuit-rules.ts; this file binds them to the formula parser (mathjs).
 */
import type { z } from "zod";

import { parseExpression } from "@/ssa/expr";
import type { Circuit } from "@/ssa/types";

import { checkOverridesWith, circuitSemanticIssuesWith, makeCircuitSchema, parseCircuitWith, type CircuitShape, type Issue } from "./circuit-rules";

export {
  CircuitError,
  describeIssue,
  formatPath,
} from "./circuit-rules";

/**
 * Checks the rules zod cannot express field by field: references, uniqueness, units, formulas.
 * Exported for the SBML importer, the form and the overrides check, which reuse the same rules.
 */
export function circuitSemanticIssues(c: z.infer<typeof CircuitShape>): Issue[] {
  return circuitSemanticIssuesWith(c, parseExpression);
}

/** The zod schema of a circuit file, structure and cross-references. */
export const CircuitSchema = makeCircuitSchema(parseExpression);

/**
 * Parses and validates a circuit file (already JSON-decoded).
 * @throws CircuitError naming the first bad field in `.message` and every problem in `.issues`.
 */
export function parseCircuit(json: unknown): Circuit {
  return parseCircuitWith(json, parseExpression);
}

/**
 * Checks parameter overrides (`--set name=value`) against a valid circuit, re-applying the bounds
 * of every rate-law field that uses an overridden parameter.
 * @throws CircuitError like `overrides.Kc: unknown parameter "Kc"`.
 */
export function checkOverrides(c: Circuit, overrides: Record<string, number> | undefined): void {
  checkOverridesWith(c, overrides, parseExpression);
}
