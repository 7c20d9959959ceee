import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";

import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

import { newUser } from "../support/client";
import { testDb } from "../support/db";

const twoStage = JSON.parse(readFileSync("examples/two-stage-reporter.circuit.json", "utf8"));

let db: Knex;
let me: Awaited<ReturnType<typeof newUser>>;
let serial = 0;

beforeAll(async () => {
  db = testDb();
  me = await newUser("data");
});
afterAll(async () => {
  await db.destroy();
});

type Body = string | Uint8Array;
function form(fields: Record<string, string>, file?: { body: Body; name: string; type?: string }, labId = me.labId): FormData {
  const f = new FormData();
  f.set("lab_id", labId);
  for (const [k, v] of Object.entries(fields)) f.set(k, v);
  if (file) f.set("file", new Blob([file.body as BlobPart], { type: file.type ?? "text/csv" }), file.name);
  return f;
}
const seriesFields = () => ({ kind: "series", name: `Induction ${++serial}`, time_unit: "min", amount_unit: "a.u.", molecules_per_unit: "0.5" });
const snapshotFields = () => ({ kind: "snapshot", name: `Plate ${++serial}`, amount_unit: "a.u.", molecules_per_unit: "4" });

/** Row counts that an upload must not change when it is refused. */
async function labState(labId = me.labId) {
  const [d, c, a] = await Promise.all([
    db("datasets").where({ lab_id: labId }).count("* as n").first(),
    db("circuits").where({ lab_id: labId }).count("* as n").first(),
    db("audit_events").where({ lab_id: labId }).count("* as n").first(),
  ]);
  return { datasets: Number(d!.n), circuits: Number(c!.n), audit: Number(a!.n) };
}

describe("dataset uploads", () => {
  it("a CSV time series is stored as uploaded, parsed, and measured in molecules", async () => {
    const csv = "time,gfp,rfp\r\n0,100,40\r\n10,120,44\r\n20,140,36\r\n30,160,40\r\n";
    const fields = seriesFields();
    const r = await me.client.request("POST", "/api/datasets", form(fields, { body: csv, name: "induction.csv" }));
    expect(r.status, r.text).toBe(201);
    const ds = await me.client.request("GET", `/api/datasets/${r.json.id}?values=1`);
    expect(ds.json).toMatchObject({ name: fields.name, kind: "series", columns: ["gfp", "rfp"], time_column: "time", rows: 4, file_name: "induction.csv",
      units: { time_unit: "min", amount_unit: "a.u.", molecules_per_unit: 0.5 }, created_by: me.email });
    expect(ds.json.values).toEqual({ kind: "series", time_column: "time", columns: ["gfp", "rfp"], time: [0, 10, 20, 30], values: [[100, 120, 140, 160], [40, 44, 36, 40]] });
    // gfp × 0.5 = 50, 60, 70, 80 molecules: mean 65, sample variance 500/3 (by hand), Fano = variance/mean.
    const gfp = ds.json.stats[0];
    expect(gfp.mean).toBeCloseTo(65, 10);
    expect(gfp.sd).toBeCloseTo(Math.sqrt(500 / 3), 10);
    expect(gfp.fano).toBeCloseTo(500 / 3 / 65, 10);
    expect(gfp.cv).toBeCloseTo(Math.sqrt(500 / 3) / 65, 10);

    const file = await fetch(`${me.client.baseUrl}/api/datasets/${r.json.id}/file`, { headers: { cookie: me.client.cookieHeader() } });
    expect(file.status).toBe(200);
    expect(file.headers.get("content-disposition")).toBe(`attachment; filename="induction.csv"; filename*=UTF-8''induction.csv`);
    expect(Buffer.from(await file.arrayBuffer()).equals(Buffer.from(csv))).toBe(true);
    const row = await db("datasets").where({ id: r.json.id }).first("sha256", "size_bytes", "created_by");
    expect(row.sha256).toBe(createHash("sha256").update(csv).digest("hex"));
    expect(row.size_bytes).toBe(Buffer.byteLength(csv));
    expect(String(row.created_by)).toBe(me.userId);
  });

  it("a single-cell snapshot with a molecules-per-unit factor: CV and Fano in molecules", async () => {
    const csv = "gfp\n1\n2\n3\n4\n";
    const r = await me.client.request("POST", "/api/datasets", form(snapshotFields(), { body: csv, name: "cells.csv" }));
    expect(r.status, r.text).toBe(201);
    // 4, 8, 12, 16 molecules: mean 10, sample variance 80/3, Fano 8/3, CV sqrt(80/3)/10 (by hand).
    expect(r.json.stats[0].mean).toBeCloseTo(10, 12);
    expect(r.json.stats[0].fano).toBeCloseTo(8 / 3, 12);
    expect(r.json.stats[0].cv).toBeCloseTo(Math.sqrt(80 / 3) / 10, 12);
  });

  it("a UTF-8 file name and bytes come back byte for byte", async () => {
    const bytes = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from("Zeit;GFP\n0;1\n5;2\n", "utf8")]);
    const r = await me.client.request("POST", "/api/datasets", form(seriesFields(), { body: bytes, name: "Messung ü.csv" }));
    expect(r.status, r.text).toBe(201);
    const file = await fetch(`${me.client.baseUrl}/api/datasets/${r.json.id}/file`, { headers: { cookie: me.client.cookieHeader() } });
    expect(Buffer.from(await file.arrayBuffer()).equals(bytes)).toBe(true);
    expect(file.headers.get("content-disposition")).toContain("filename*=UTF-8''Messung%20%C3%BC.csv");
  });

  const bad: [string, () => FormData, number, RegExp][] = [
    ["a non-numeric value", () => form(seriesFields(), { body: "time,gfp\n0,1\n1,2\n2,3\n3,4\n4,5\n5,abc\n", name: "a.csv" }), 422, /^file: row 7, column "gfp": "abc" is not a number$/],
    ["a missing column", () => form(seriesFields(), { body: "time,gfp,rfp\n0,1,2\n1,2\n", name: "a.csv" }), 422, /^file: row 3 has 2 values; expected 3 \("time", "gfp", "rfp"\)$/],
    ["a time series without a reporter column", () => form(seriesFields(), { body: "time\n0\n1\n", name: "a.csv" }), 422, /^file: a time series needs a time column/],
    ["a negative time", () => form(seriesFields(), { body: "time,gfp\n0,1\n-5,2\n", name: "a.csv" }), 422, /^file: row 3, column "time": -5 is negative/],
    ["an empty file", () => form(seriesFields(), { body: "", name: "empty.csv" }), 422, /^file: is empty$/],
    ["a binary file claiming to be CSV", () => form(seriesFields(), { body: new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00]), name: "sheet.csv", type: "text/csv" }), 422, /^file: is binary, not text \(a NUL byte at byte 5\)/],
    ["Latin-1 text that is not UTF-8", () => form(seriesFields(), { body: new Uint8Array([...Buffer.from("time,gr"), 0xfc, ...Buffer.from("n\n0,1\n")]), name: "a.csv" }), 422, /^file: is not UTF-8 text \(invalid byte sequence near byte 7\)/],
    ["a spreadsheet extension", () => form(seriesFields(), { body: "time,gfp\n0,1\n", name: "book.xlsx" }), 422, /^file: "book.xlsx" is a .xlsx file; expected .csv, .tsv, .txt$/],
    ["no file at all", () => form(seriesFields()), 422, /^file: is required/],
    ["a series without a time unit", () => form({ ...seriesFields(), time_unit: "" }, { body: "time,gfp\n0,1\n", name: "a.csv" }), 422, /^time_unit: is required/],
    ["a.u. without a factor", () => form({ ...snapshotFields(), molecules_per_unit: "" }, { body: "gfp\n1\n2\n", name: "a.csv" }), 422, /^molecules_per_unit: is required when amounts are in "a.u."/],
    ["a factor that is not a number", () => form({ ...snapshotFields(), molecules_per_unit: "lots" }, { body: "gfp\n1\n2\n", name: "a.csv" }), 422, /^molecules_per_unit: /],
    ["an unknown kind", () => form({ ...snapshotFields(), kind: "movie" }, { body: "gfp\n1\n2\n", name: "a.csv" }), 422, /^kind: /],
  ];
  it.each(bad)("%s is refused with the field (and row) named, and nothing is stored", async (_label, make, status, message) => {
    const before = await labState();
    const r = await me.client.request("POST", "/api/datasets", make());
    expect(r.status, r.text).toBe(status);
    expect(r.json.error).toMatch(message);
    expect(await labState()).toEqual(before);
  });

  it("a 50 MB file is refused (413) from its declared size, naming the file field, and nothing is stored", async () => {
    const before = await labState();
    const t0 = performance.now();
    const big = new Uint8Array(50 * 1024 * 1024).fill(0x31);
    const r = await me.client.request("POST", "/api/datasets", form(seriesFields(), { body: big, name: "huge.csv" }));
    expect(r.status).toBe(413);
    expect(r.json.error).toMatch(/^file: larger than 10 MB \(the upload is 50(\.\d)? MB\)/);
    expect(await labState()).toEqual(before);
    console.log(`50 MB upload refused in ${(performance.now() - t0).toFixed(0)} ms`);
  });

  it("a streamed body without a length is cut off once it passes the limit (413)", async () => {
    const before = await labState();
    const boundary = "----bwtest";
    const head = Buffer.from(`--${boundary}\r\ncontent-disposition: form-data; name="lab_id"\r\n\r\n${me.labId}\r\n--${boundary}\r\ncontent-disposition: form-data; name="file"; filename="s.csv"\r\ncontent-type: text/csv\r\n\r\n`);
    const chunk = new Uint8Array(1024 * 1024).fill(0x32);
    let sent = 0;
    const stream = new ReadableStream<Uint8Array>({
      pull(c) {
        if (sent === 0) c.enqueue(head);
        if (sent >= 12) c.close();
        else c.enqueue(chunk);
        sent += 1;
      },
    });
    const res = await fetch(`${me.client.baseUrl}/api/datasets`, {
      method: "POST", body: stream, duplex: "half",
      headers: { "content-type": `multipart/form-data; boundary=${boundary}`, cookie: me.client.cookieHeader() },
    } as RequestInit);
    expect(res.status).toBe(413);
    expect(((await res.json()) as { error: string }).error).toMatch(/^file: larger than 10 MB/);
    expect(await labState()).toEqual(before);
  });

  it("a JSON body instead of a form is a 415 naming the content type", async () => {
    const r = await me.client.request("POST", "/api/datasets", { lab_id: me.labId, kind: "series" });
    expect(r.status).toBe(415);
    expect(r.json.error).toMatch(/^content-type: send multipart\/form-data/);
  });

  it("a duplicate name is a 409 naming the name; only the owner deletes, and the audit trail has both", async () => {
    const fields = snapshotFields();
    const first = await me.client.request("POST", "/api/datasets", form(fields, { body: "gfp\n1\n2\n", name: "a.csv" }));
    expect(first.status).toBe(201);
    const again = await me.client.request("POST", "/api/datasets", form(fields, { body: "gfp\n3\n4\n", name: "b.csv" }));
    expect(again.status).toBe(409);
    expect(again.json.error).toBe(`name: the lab already has a dataset named "${fields.name}"`);
    expect((await me.client.request("DELETE", `/api/datasets/${first.json.id}`)).status).toBe(204);
    expect((await me.client.request("GET", `/api/datasets/${first.json.id}`)).status).toBe(404);
    const events = await db("audit_events").where({ target_type: "dataset", target_id: first.json.id }).orderBy("id").select("action");
    expect(events.map((e) => e.action)).toEqual(["dataset.uploaded", "dataset.deleted"]);
  });

  it("another lab's dataset is a 404 (its existence stays private)", async () => {
    const mine = await me.client.request("POST", "/api/datasets", form(snapshotFields(), { body: "gfp\n1\n2\n", name: "a.csv" }));
    const stranger = await newUser("stranger");
    expect((await stranger.client.request("GET", `/api/datasets/${mine.json.id}`)).status).toBe(404);
    expect((await stranger.client.request("GET", `/api/datasets/${mine.json.id}/file`)).status).toBe(404);
  });
});

describe("circuit files", () => {
  it("the SBML export of the two-stage reporter uploads back as the same circuit JSON", async () => {
    const made = await me.client.request("POST", "/api/circuits", { lab_id: me.labId, circuit: twoStage });
    expect(made.status, made.text).toBe(201);
    const sbml = await me.client.request("GET", `/api/versions/${made.json.version_id}/sbml`);
    expect(sbml.status).toBe(200);
    const other = await newUser("sbmlfile");
    const up = await other.client.request("POST", "/api/circuits/upload", form({}, { body: sbml.text, name: "two-stage-reporter-v1.xml", type: "application/sbml+xml" }, other.labId));
    expect(up.status, up.text).toBe(201);
    expect(up.json.source_format).toBe("sbml");
    const back = await other.client.request("GET", `/api/versions/${up.json.version_id}`);
    expect(back.json).toEqual(twoStage);
    const hashes = await db("circuit_versions").whereIn("id", [made.json.version_id, up.json.version_id]).select("content_hash");
    expect(new Set(hashes.map((h) => h.content_hash)).size).toBe(1);
    const audit = await db("audit_events").where({ lab_id: other.labId, action: "circuit.created" }).select("details");
    expect(audit).toHaveLength(1);
    expect(audit[0].details).toMatchObject({ source: "sbml", file_name: "two-stage-reporter-v1.xml" });
  });

  it("a circuit JSON file becomes a circuit", async () => {
    const other = await newUser("jsonfile");
    const up = await other.client.request("POST", "/api/circuits/upload", form({}, { body: JSON.stringify(twoStage), name: "reporter.json", type: "application/json" }, other.labId));
    expect(up.status, up.text).toBe(201);
    expect(up.json).toMatchObject({ name: "Two-stage reporter", source_format: "circuit" });
  });

  const badCircuits: [string, string, string, RegExp][] = [
    ["malformed SBML", "<sbml><model><listOfReactions><reaction id='r1'/></listOfReactions></model></sbml>", "bad.xml", /^file: sbml/],
    ["SBML cut off mid-element", "<?xml version='1.0'?><sbml xmlns='http://www.sbml.org/sbml/level3/version2/core' level='3' version='2'><model id='m'><listOfSpecies><species id=", "cut.xml", /^file: sbml/],
    ["JSON that is not JSON", "{ \"format\": ", "c.json", /^file: not valid JSON/],
    ["a circuit with an unknown parameter", JSON.stringify({ ...twoStage, reactions: [{ ...twoStage.reactions[0], rate: { law: "mass_action", k: "kx" } }] }), "c.json", /^file: reactions\[0\]\.rate\.k: /],
    ["an empty file", "", "c.json", /^file: is empty$/],
    ["a CSV", "time,gfp\n0,1\n", "data.csv", /^file: "data.csv" is a .csv file; expected .xml, .sbml, .json$/],
  ];
  it.each(badCircuits)("%s is refused naming the file field, and nothing is stored", async (_label, body, name, message) => {
    const before = await labState();
    const r = await me.client.request("POST", "/api/circuits/upload", form({}, { body, name, type: "application/octet-stream" }));
    expect(r.status, r.text).toBe(422);
    expect(r.json.error).toMatch(message);
    expect(await labState()).toEqual(before);
  });
});
