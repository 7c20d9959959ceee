import { ZodError } from "zod";

import { CircuitError } from "@/lib/schemas/circuit";
import { describeZodError } from "@/lib/schemas/common";
import { ModelInputError } from "@/ssa/types";

/** An error with an HTTP status and a `field: reason` message safe to show the caller. */
export class HttpError extends Error {
  constructor(readonly status: number, message: string) {
    super(message);
  }
}
export const badRequest = (msg: string) => new HttpError(400, msg);
export const unprocessable = (msg: string) => new HttpError(422, msg);
export const unauthenticated = () => new HttpError(401, "session: sign in, or send a valid API token");
export const forbidden = (msg = "role: your role in this lab may not do this") => new HttpError(403, msg);
export const notFound = (what = "resource") => new HttpError(404, `${what}: not found`);
export const conflict = (msg: string) => new HttpError(409, msg);
export const tooMany = (msg: string) => new HttpError(429, msg);

const MAX_BODY_BYTES = 2 * 1024 * 1024;

/** Reads a JSON body with a size limit; junk or an oversized body is a 400 naming `body`. */
export async function readJson(req: Request, maxBytes = MAX_BODY_BYTES): Promise<unknown> {
  const length = Number(req.headers.get("content-length") ?? 0);
  if (length > maxBytes) throw badRequest(`body: larger than ${Math.round(maxBytes / 1024)} KB`);
  const text = await req.text();
  if (text.length > maxBytes) throw badRequest(`body: larger than ${Math.round(maxBytes / 1024)} KB`);
  if (!text.trim()) throw badRequest("body: empty; expected a JSON object");
  try {
    return JSON.parse(text);
  } catch {
    throw badRequest("body: not valid JSON");
  }
}

type Handler<C> = (req: Request, ctx: C) => Promise<Response>;

/**
 * Wraps a route handler: known errors become JSON `{ error }` with their status, zod errors
 * 422 naming the field, anything else is logged with the route and answered 500.
 */
export function handle<C>(route: string, fn: Handler<C>): Handler<C> {
  return async (req, ctx) => {
    try {
      return await fn(req, ctx);
    } catch (e) {
      if (e instanceof HttpError) return Response.json({ error: e.message }, { status: e.status });
      if (e instanceof ZodError) return Response.json({ error: describeZodError(e) }, { status: 422 });
      if (e instanceof CircuitError) return Response.json({ error: e.message, issues: e.issues }, { status: 422 });
      if (e instanceof ModelInputError) return Response.json({ error: e.message }, { status: 422 });
      console.error(`[${route}]`, e);
      return Response.json({ error: "server: unexpected error" }, { status: 500 });
    }
  };
}

/** A numeric id from a URL segment; anything else is a 404 for `what` (no such thing). */
export function idParam(value: string | undefined, what: string): string {
  if (!value || !/^[1-9][0-9]{0,15}$/.test(value)) throw notFound(what);
  return value;
}
