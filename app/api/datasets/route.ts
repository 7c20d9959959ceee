import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { createDataset, listDatasets, parseDatasetUpload } from "@/lib/data/datasets";
import { handle } from "@/lib/http";
import { DATASET_LIMITS, DatasetListQuery, DatasetUploadFields } from "@/lib/schemas/datasets";
import { formFields, readUpload, requireFile } from "@/lib/upload";

export const GET = handle("GET /api/datasets", async (req) => {
  const user = await requireUser(req);
  const { lab_id } = DatasetListQuery.parse(Object.fromEntries(new URL(req.url).searchParams));
  await requireLabRole(user.id, lab_id, "lab:read");
  return Response.json({ datasets: await listDatasets(lab_id) });
});

/** Multipart upload: lab_id, kind, name, units and the CSV in `file` (≤ 10 MB). */
export const POST = handle("POST /api/datasets", async (req) => {
  const user = await requireUser(req);
  const form = await readUpload(req, DATASET_LIMITS.maxFileBytes);
  const fields = DatasetUploadFields.parse(formFields(form, ["file"]));
  await requireLabRole(user.id, fields.lab_id, "data:write");
  const file = await requireFile(form, "file", DATASET_LIMITS.maxFileBytes, ["csv", "tsv", "txt"]);
  const parsed = parseDatasetUpload(file, fields);
  const id = await createDataset({ id: user.id, email: user.email }, fields, file, parsed);
  return Response.json({ id, warnings: parsed.warnings, stats: parsed.stats }, { status: 201 });
});
