import { badRequest, describeBadText, HttpError, unprocessable } from "@/lib/http";
import { formatBytes } from "@/lib/view/datasets";

const FORM_OVERHEAD = 64 * 1024; // multipart boundaries, headers and the text fields
const DRAIN_CAP = 64 * 1024 * 1024; // bytes of an oversized streamed body read and discarded at most

const tooLarge = (field: string, maxBytes: number, got: number) =>
  new HttpError(413, `${field}: larger than ${formatBytes(maxBytes)} (the upload is ${formatBytes(got)}); split the file or thin it out`);

/**
 * Reads a multipart/form-data body of at most `maxFileBytes` for its file (plus the text
 * fields). An oversized body is refused from its Content-Length before it is read, or as soon
 * as the streamed bytes pass the limit.
 * @throws HttpError 413 naming `fileField`, 415 naming `content-type` when the body is not sent
 *   as multipart form data, 400 when it says so but is not.
 */
export async function readUpload(req: Request, maxFileBytes: number, fileField = "file"): Promise<FormData> {
  const type = req.headers.get("content-type") ?? "";
  if (!/^multipart\/form-data;/i.test(type)) {
    throw new HttpError(415, `content-type: send multipart/form-data with the file in a "${fileField}" field`);
  }
  const limit = maxFileBytes + FORM_OVERHEAD;
  const declared = Number(req.headers.get("content-length") ?? NaN);
  if (Number.isFinite(declared) && declared > limit) {
    await req.body?.cancel().catch(() => undefined);
    throw tooLarge(fileField, maxFileBytes, declared);
  }
  const chunks: Uint8Array[] = [];
  let total = 0;
  if (req.body) {
    const reader = req.body.getReader();
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      total += value.byteLength;
      if (total > limit) {
        // Read the rest and drop it (up to a cap), so the client gets the 413 on a healthy
        // connection instead of a reset; past the cap the connection is cut.
        for (;;) {
          const next = await reader.read();
          if (next.done) break;
          total += next.value.byteLength;
          if (total > DRAIN_CAP) {
            await reader.cancel().catch(() => undefined);
            break;
          }
        }
        throw tooLarge(fileField, maxFileBytes, total);
      }
      chunks.push(value);
    }
  }
  try {
    return await new Response(Buffer.concat(chunks), { headers: { "content-type": type } }).formData();
  } catch {
    throw badRequest("body: not valid multipart/form-data");
  }
}

/**
 * The text fields of a form as an object (repeated names keep the last value).
 * @throws HttpError 422 naming the field when its text holds a NUL (the database cannot store it).
 */
export function formFields(form: FormData, except: string[] = []): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of form.entries()) {
    if (typeof v !== "string" || except.includes(k)) continue;
    const bad = describeBadText(k) ?? describeBadText(v);
    if (bad) throw unprocessable(`${describeBadText(k) ? "form" : k}: ${bad}`);
    out[k] = v;
  }
  return out;
}

export interface UploadedFile { name: string; type: string; bytes: Uint8Array }

/**
 * The file in `field`, within `maxBytes`, with a name ending in one of `extensions` (when the
 * name has an extension at all).
 * @throws HttpError 422 naming the field: missing, empty, too large (413) or of the wrong kind.
 */
export async function requireFile(form: FormData, field: string, maxBytes: number, extensions: string[]): Promise<UploadedFile> {
  const f = form.get(field);
  if (!f || typeof f === "string") throw new HttpError(422, `${field}: is required (choose a file)`);
  if (f.size > maxBytes) throw tooLarge(field, maxBytes, f.size);
  const name = (f.name || "upload").replace(/[\\/]/g, "_").slice(0, 200);
  const ext = /\.([A-Za-z0-9]+)$/.exec(name)?.[1]?.toLowerCase();
  if (ext && !extensions.includes(ext)) {
    throw new HttpError(422, `${field}: "${name}" is a .${ext} file; expected ${extensions.map((e) => `.${e}`).join(", ")}`);
  }
  const bytes = new Uint8Array(await f.arrayBuffer());
  if (bytes.length === 0) throw new HttpError(422, `${field}: is empty`);
  return { name, type: f.type || "application/octet-stream", bytes };
}
