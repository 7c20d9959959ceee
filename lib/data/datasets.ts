import { createHash } from "node:crypto";

import { db } from "@/db/client";
import { recordAudit, type AuditEventInput } from "@/lib/data/audit";
import type { DatasetJson } from "@/lib/view/dataset-overlay";
import { DatasetFileError, datasetStats, decodeTextFile, parseDatasetCsv } from "@/lib/view/datasets";
import { conflict, notFound, unprocessable } from "@/lib/http";
import { ParsedDataset, type ColumnStats, type DatasetUnits, type DatasetUploadFields } from "@/lib/schemas/datasets";
import type { UploadedFile } from "@/lib/upload";

type Actor = NonNullable<AuditEventInput["actor"]>;

/**
 * Checks and parses an uploaded dataset file: text (no NUL bytes, valid UTF-8), then the CSV
 * rules of `parseDatasetCsv`, then the parsed values against their schema.
 * @throws HttpError 422 naming the field and the row or column.
 */
export function parseDatasetUpload(file: UploadedFile, fields: DatasetUploadFields): { parsed: ParsedDataset; stats: ColumnStats[]; warnings: string[] } {
  try {
    const text = decodeTextFile(file.bytes, "file");
    const { parsed, warnings } = parseDatasetCsv(text, fields.kind, "file");
    return { parsed, stats: datasetStats(parsed, fields.molecules_per_unit), warnings };
  } catch (e) {
    if (e instanceof DatasetFileError) throw unprocessable(e.message);
    throw e;
  }
}

/**
 * Stores a dataset (the file's bytes as uploaded, the parsed values and their statistics) and
 * records `dataset.uploaded`, in one transaction.
 * @throws 409 when the lab already has a dataset of that name.
 */
export async function createDataset(actor: Actor, fields: DatasetUploadFields, file: UploadedFile, p: { parsed: ParsedDataset; stats: ColumnStats[]; warnings: string[] }): Promise<string> {
  const units: DatasetUnits = { time_unit: fields.time_unit ?? null, amount_unit: fields.amount_unit, molecules_per_unit: fields.molecules_per_unit };
  const sha256 = createHash("sha256").update(file.bytes).digest("hex");
  try {
    return await db.transaction(async (trx) => {
      const [row] = await trx("datasets").insert({
        labId: fields.lab_id, name: fields.name, kind: fields.kind, description: fields.description ?? null,
        fileName: file.name, contentType: file.type, sizeBytes: file.bytes.length, sha256, original: Buffer.from(file.bytes),
        units: JSON.stringify(units), parsed: JSON.stringify(p.parsed), stats: JSON.stringify({ columns: p.stats, warnings: p.warnings }),
        createdBy: actor.id,
      }).returning(["id"]);
      const id = String(row.id);
      await recordAudit({
        labId: fields.lab_id, actor, action: "dataset.uploaded", target: { type: "dataset", id },
        details: { name: fields.name, kind: fields.kind, file_name: file.name, size_bytes: file.bytes.length },
      }, trx);
      return id;
    });
  } catch (e) {
    if ((e as { code?: string }).code === "23505") throw conflict(`name: the lab already has a dataset named "${fields.name}"`);
    throw e;
  }
}

interface DatasetRow {
  id: string; labId: string; name: string; kind: "series" | "snapshot"; description: string | null; fileName: string; contentType: string;
  sizeBytes: number; sha256: string; units: DatasetUnits; stats: { columns: ColumnStats[]; warnings: string[] };
  columns: string[]; timeColumn: string | null; rows: number; createdByEmail: string | null; createdAt: Date;
  parsed?: ParsedDataset;
}

const META = [
  "d.id", "d.labId", "d.name", "d.kind", "d.description", "d.fileName", "d.contentType", "d.sizeBytes", "d.sha256", "d.units", "d.stats",
  db.raw("d.parsed->'columns' as columns"), db.raw("d.parsed->>'time_column' as time_column"),
  db.raw("jsonb_array_length(case when d.kind = 'series' then d.parsed->'time' else d.parsed->'values'->0 end) as rows"),
  "u.email as createdByEmail", "d.createdAt",
];

function toJson(r: DatasetRow): DatasetJson {
  return {
    id: String(r.id), lab_id: String(r.labId), name: r.name, kind: r.kind, description: r.description, file_name: r.fileName,
    content_type: r.contentType, size_bytes: r.sizeBytes, sha256: r.sha256, units: r.units, columns: r.columns, time_column: r.timeColumn,
    rows: Number(r.rows), stats: r.stats.columns, warnings: r.stats.warnings, created_by: r.createdByEmail,
    created_at: new Date(r.createdAt).toISOString(), ...(r.parsed ? { values: r.parsed } : {}),
  };
}

/** The lab's datasets, newest first, without their values. */
export async function listDatasets(labId: string): Promise<DatasetJson[]> {
  const rows = await db("datasets as d").leftJoin("users as u", "u.id", "d.createdBy").where("d.labId", labId)
    .orderBy("d.createdAt", "desc").orderBy("d.id", "desc").select(META);
  return rows.map(toJson);
}

/** One dataset (with its parsed values when `values`), or null. */
export async function getDataset(id: string, opts: { values?: boolean } = {}): Promise<DatasetJson | null> {
  const row = await db("datasets as d").leftJoin("users as u", "u.id", "d.createdBy").where("d.id", id)
    .first([...META, ...(opts.values ? ["d.parsed"] : [])]);
  return row ? toJson(row) : null;
}

/** The file exactly as uploaded. */
export async function getDatasetFile(id: string): Promise<{ fileName: string; contentType: string; original: Buffer } | null> {
  return (await db("datasets").where({ id }).first("fileName", "contentType", "original")) ?? null;
}

/** Deletes a dataset and records `dataset.deleted`. @throws 404 when it is gone already. */
export async function deleteDataset(id: string, actor: Actor): Promise<void> {
  await db.transaction(async (trx) => {
    const [row] = await trx("datasets").where({ id }).delete().returning(["labId", "name", "kind", "fileName"]);
    if (!row) throw notFound("dataset");
    await recordAudit({ labId: String(row.labId), actor, action: "dataset.deleted", target: { type: "dataset", id }, details: { name: row.name, kind: row.kind, file_name: row.fileName } }, trx);
  });
}
