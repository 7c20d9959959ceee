import { ZodError } from "zod";

import { CircuitError } from "@/lib/schemas/circuit";
import { describeZodError, formatPath } from "@/lib/schemas/common";
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
/** No request or circuit file nests deeper than a few levels; 64 leaves room and bounds the work. */
export const MAX_JSON_DEPTH = 64;

/**
 * How deeply a JSON text nests its arrays and objects, counted in one pass over the text and
 * stopping at the first level past `limit` (brackets inside strings do not count).
 */
export function jsonDepthExceeds(text: string, limit = MAX_JSON_DEPTH): boolean {
  let depth = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 0x5c) i++; // backslash: skip the escaped character
      else if (c === 0x22) inString = false;
    } else if (c === 0x22) inString = true;
    else if (c === 0x5b || c === 0x7b) {
      if (++depth > limit) return true;
    } else if (c === 0x5d || c === 0x7d) depth--;
  }
  return false;
}

/**
 * JSON.parse with the nesting bounded first, so a hostile body (`[[[[…` twenty thousand deep)
 * costs one pass over its text and a clear refusal instead of seconds of walking.
 * @param field names the value in a refusal (`body`, `file`).
 * @throws HttpError with `status` naming `field` when the text nests too deeply or is not JSON.
 */
export function parseJsonText(text: string, field: string, status = 400): unknown {
  if (jsonDepthExceeds(text)) throw new HttpError(status, `${field}: nested deeper than ${MAX_JSON_DEPTH} levels of arrays and objects`);
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new HttpError(status, field === "body" ? "body: not valid JSON" : `${field}: not valid JSON (${e instanceof Error ? e.message : "parse error"})`);
  }
}

/**
 * Reads a JSON body with a size limit. Junk or an oversized body is a 400 naming `body`; a body
 * sent as anything but application/json (a form, text/plain) is a 415 naming `content-type`, so a
 * JSON route never takes what an HTML form on another site can send; text the database cannot
 * hold is a 422 naming its field (requireCleanText).
 */
export async function readJson(req: Request, maxBytes = MAX_BODY_BYTES): Promise<unknown> {
  const length = Number(req.headers.get("content-length") ?? 0);
  if (length > maxBytes) throw badRequest(`body: larger than ${Math.round(maxBytes / 1024)} KB`);
  const text = await req.text();
  if (text.length > maxBytes) throw badRequest(`body: larger than ${Math.round(maxBytes / 1024)} KB`);
  if (!text.trim()) throw badRequest("body: empty; expected a JSON object");
  requireJsonType(req);
  const value = parseJsonText(text, "body");
  requireCleanText(value);
  return value;
}

/** @throws HttpError 415 naming `content-type` unless the request says application/json. */
export function requireJsonType(req: Request): void {
  const type = req.headers.get("content-type") ?? "";
  if (!/^application\/json\s*(;|$)/i.test(type)) {
    const got = type ? `"${type.split(";")[0]!.trim().slice(0, 60)}"` : "no content type";
    throw new HttpError(415, `content-type: send the body as application/json (got ${got})`);
  }
}

// A lone surrogate: a high one not followed by a low one, or a low one not after a high one.
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

/**
 * What is wrong with a string as stored text, or null: PostgreSQL text cannot hold U+0000, and a
 * lone UTF-16 surrogate (which a JSON `\uD800` escape can carry) is not Unicode text at all.
 */
export function describeBadText(s: string): string | null {
  const nul = s.indexOf("\u0000");
  if (nul >= 0) return `contains a NUL character (U+0000) at character ${nul}; text may not contain NUL`;
  const m = LONE_SURROGATE.exec(s);
  if (m) return `contains a lone surrogate (U+${m[0].charCodeAt(0).toString(16).toUpperCase()}) at character ${m.index}; send well-formed Unicode text`;
  return null;
}

/**
 * Checks every string and object key in a decoded JSON value.
 * @param field names the value in the message (`file: species[0].name: …`); without it the path
 *   alone does (`circuit.name: …`), or `body` for the value itself.
 * @throws HttpError 422 naming the first bad string's path.
 */
export function requireCleanText(value: unknown, field?: string): void {
  // An explicit stack, so a deeply nested value cannot overflow the call stack; each entry links
  // to its parent and the path is spelled out only for a problem, so the walk stays linear in the
  // size of the value however deep it nests.
  type Entry = { v: unknown; key: PropertyKey | null; parent: Entry | null };
  const pathOf = (e: Entry) => {
    const path: PropertyKey[] = [];
    for (let at: Entry | null = e; at && at.key !== null; at = at.parent) path.push(at.key);
    return path.reverse();
  };
  const stack: Entry[] = [{ v: value, key: null, parent: null }];
  while (stack.length) {
    const entry = stack.pop()!;
    const v = entry.v;
    let problem: string | null = null;
    if (typeof v === "string") problem = describeBadText(v);
    else if (Array.isArray(v)) for (let i = v.length - 1; i >= 0; i--) stack.push({ v: v[i], key: i, parent: entry });
    else if (v !== null && typeof v === "object") {
      const keys = Object.keys(v);
      for (const k of keys) {
        const bad = describeBadText(k);
        if (bad) {
          problem = `a key ${bad}`;
          break;
        }
      }
      if (!problem) for (let i = keys.length - 1; i >= 0; i--) stack.push({ v: (v as Record<string, unknown>)[keys[i]!], key: keys[i]!, parent: entry });
    }
    if (problem) {
      const path = pathOf(entry);
      const where = path.length ? formatPath(path) : "";
      throw unprocessable(field ? `${field}: ${where ? `${where}: ` : ""}${problem}` : `${where || "body"}: ${problem}`);
    }
  }
}

/** @throws HttpError 422 naming the parameter when a query string value holds a NUL. */
function requireCleanQuery(req: Request): void {
  const q = req.url.indexOf("?");
  if (q < 0) return;
  for (const [k, v] of new URLSearchParams(req.url.slice(q + 1))) {
    const bad = describeBadText(k) ?? describeBadText(v);
    if (bad) throw unprocessable(`${describeBadText(k) ? "query" : k}: ${bad}`);
  }
}

/** A PostgreSQL refusal of the text itself (22021 NUL byte, 22P05 bad Unicode escape in jsonb). */
const isBadTextError = (e: unknown) => typeof e === "object" && e !== null && ["22021", "22P05"].includes((e as { code?: string }).code ?? "");

type Handler<C> = (req: Request, ctx: C) => Promise<Response>;

/**
 * Wraps a route handler: known errors become JSON `{ error }` with their status, zod errors
 * 422 naming the field, anything else is logged with the route and answered 500. Query strings
 * are checked for text the database cannot hold before the handler runs.
 */
export function handle<C>(route: string, fn: Handler<C>): Handler<C> {
  return async (req, ctx) => {
    try {
      requireCleanQuery(req);
      return await fn(req, ctx);
    } catch (e) {
      if (e instanceof HttpError) return Response.json({ error: e.message }, { status: e.status });
      if (e instanceof ZodError) return Response.json({ error: describeZodError(e) }, { status: 422 });
      if (e instanceof CircuitError) return Response.json({ error: e.message, issues: e.issues }, { status: 422 });
      if (e instanceof ModelInputError) return Response.json({ error: e.message }, { status: 422 });
      // A backstop: every text field is checked on the way in, so this means one was missed.
      if (isBadTextError(e)) {
        console.error(`[${route}] text the database refused got past the input checks`, e);
        return Response.json({ error: "body: contains text the database cannot store (a NUL character or invalid Unicode)" }, { status: 422 });
      }
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
