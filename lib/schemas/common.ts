import { z } from "zod";

/** A zod path as CONTRACT.md writes fields: `reactions[3].rate.K`. */
export const formatPath = (path: readonly PropertyKey[]): string =>
  path.map((k, n) => (typeof k === "number" ? `[${k}]` : (n ? "." : "") + String(k))).join("");

/**
 * Formats a zod issue the way CONTRACT.md does: `reactions[3].rate.K: unknown parameter "Kc"`;
 * an issue about the whole input names `root` instead (`body` for a request, `(root)` for a circuit file).
 */
export function describeIssue(issue: { path: readonly PropertyKey[]; message: string }, root = "body"): string {
  return `${issue.path.length ? formatPath(issue.path) : root}: ${issue.message}`;
}

/** First issue of a ZodError as one line, for an HTTP error body or a CLI message. */
export const describeZodError = (e: z.ZodError): string => describeIssue(e.issues[0] ?? { path: [], message: "invalid" });

/** A numeric id in a URL segment or a query string. */
export const Id = z.coerce.number().int().positive().max(Number.MAX_SAFE_INTEGER);
