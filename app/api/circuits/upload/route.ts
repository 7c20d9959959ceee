import { z } from "zod";

import { requireLabRole } from "@/lib/access";
import { requireUser } from "@/lib/auth/session";
import { circuitFromBody } from "@/lib/circuit-input";
import { createCircuit } from "@/lib/data/circuits";
import { DatasetFileError, decodeTextFile } from "@/lib/view/datasets";
import { handle, HttpError, parseJsonText, requireCleanText, unprocessable } from "@/lib/http";
import { IdField } from "@/lib/schemas/api";
import { CircuitError } from "@/lib/schemas/circuit";
import { DATASET_LIMITS } from "@/lib/schemas/datasets";
import { formFields, readUpload, requireFile } from "@/lib/upload";

const Fields = z.strictObject({ lab_id: IdField });

/**
 * A circuit from a file (multipart: lab_id, file): SBML (.xml, .sbml) through the SBML import,
 * or a circuit JSON file (.json). The format follows the extension, else the first character.
 */
export const POST = handle("POST /api/circuits/upload", async (req) => {
  const user = await requireUser(req);
  const form = await readUpload(req, DATASET_LIMITS.maxCircuitFileBytes);
  const { lab_id } = Fields.parse(formFields(form, ["file"]));
  await requireLabRole(user.id, lab_id, "circuit:write");
  const file = await requireFile(form, "file", DATASET_LIMITS.maxCircuitFileBytes, ["xml", "sbml", "json"]);
  let text: string;
  try {
    text = decodeTextFile(file.bytes, "file");
  } catch (e) {
    if (e instanceof DatasetFileError) throw unprocessable(e.message);
    throw e;
  }
  const ext = /\.([A-Za-z0-9]+)$/.exec(file.name)?.[1]?.toLowerCase();
  const isSbml = ext === "xml" || ext === "sbml" || (ext !== "json" && text.trimStart().startsWith("<"));
  let body: { circuit?: unknown; sbml?: string };
  if (isSbml) body = { sbml: text };
  else {
    try {
      body = { circuit: parseJsonText(text, "file", 422) };
    } catch (e) {
      if (e instanceof HttpError && e.message.startsWith("file: not valid JSON")) throw unprocessable(`${e.message}; expected SBML or a circuit JSON file`);
      throw e;
    }
    requireCleanText(body.circuit, "file");
  }
  let parsed: Awaited<ReturnType<typeof circuitFromBody>>;
  try {
    parsed = await circuitFromBody(body);
  } catch (e) {
    // Name the file field in front of the circuit's own field, e.g. `file: reactions[2].rate.K: …`.
    if (e instanceof CircuitError) return Response.json({ error: `file: ${e.message}`, issues: e.issues }, { status: 422 });
    if (e instanceof HttpError && e.status === 422) throw unprocessable(`file: ${e.message}`);
    throw e;
  }
  const { id, versionId } = await createCircuit(lab_id, user.id, parsed.circuit, parsed.sourceFormat, (r) => ({
    labId: lab_id, actor: { id: user.id, email: user.email }, action: "circuit.created", target: { type: "circuit", id: r.id },
    details: { name: parsed.circuit.name, version_id: r.versionId, source: parsed.sourceFormat, file_name: file.name },
  }), parsed.warnings);
  return Response.json({ id, version_id: versionId, name: parsed.circuit.name, source_format: parsed.sourceFormat, ...(parsed.warnings.length ? { warnings: parsed.warnings } : {}) }, { status: 201 });
});
