import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { getDataset, getDatasetFile } from "@/lib/data/datasets";
import { handle, idParam, notFound } from "@/lib/http";

/** Content-Disposition for a download, with an ASCII fallback name and the UTF-8 one (RFC 6266). */
function attachment(fileName: string): string {
  const ascii = fileName.replace(/[^\x20-\x7e]/g, "_").replace(/["\\]/g, "_");
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(fileName)}`;
}

/** The file byte for byte as it was uploaded. */
export const GET = handle("GET /api/datasets/:id/file", async (req, ctx: { params: Promise<{ id: string }> }) => {
  const user = await requireUser(req);
  const id = idParam((await ctx.params).id, "dataset");
  const ds = await getDataset(id);
  if (!ds) throw notFound("dataset");
  await requireLabRole(user.id, ds.lab_id, "lab:read", "dataset");
  const file = await getDatasetFile(id);
  if (!file) throw notFound("dataset");
  return new Response(new Uint8Array(file.original), {
    headers: {
      // Served as a download, never rendered: the bytes are whatever the uploader sent.
      "content-type": /^text\/(csv|plain|tab-separated-values)\b/.test(file.contentType) ? file.contentType : "text/csv",
      "content-disposition": attachment(file.fileName), "x-content-type-options": "nosniff",
      "content-length": String(file.original.length),
    },
  });
});
