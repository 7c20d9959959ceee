import { z } from "zod";

/** Formats a zod issue the way CONTRACT.md does: `reactions[3].rate.K: unknown parameter "Kc"`. */
export function describeIssue(issue: { path: readonly PropertyKey[]; message: string }): string {
  const path = issue.path
    .map((k, n) => (typeof k === "number" ? `[${k}]` : (n ? "." : "") + String(k)))
    .join("");
  return `${path || "body"}: ${issue.message}`;
}

/** First issue of a ZodError as one line, for an HTTP error body or a CLI message. */
export const describeZodError = (e: z.ZodError): string => describeIssue(e.issues[0] ?? { path: [], message: "invalid" });

/** A numeric id in a URL segment or a query string. */
export const Id = z.coerce.number().int().positive().max(Number.MAX_SAFE_INTEGER);
