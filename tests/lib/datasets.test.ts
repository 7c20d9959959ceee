import { describe, expect, it } from "vitest";

import { amountFactor, measuredNoiseRows, seriesOverlayPoints, snapshotOverlayBins, type DatasetJson } from "@/lib/view/dataset-overlay";
import { DatasetFileError, decodeTextFile, histogram, measuredStats, parseDatasetCsv, timeFactor } from "@/lib/view/datasets";
import { DatasetUploadFields } from "@/lib/schemas/datasets";

const enc = (s: string) => new TextEncoder().encode(s);
const errorOf = (f: () => unknown): string => {
  try {
    f();
  } catch (e) {
    if (e instanceof DatasetFileError) return e.message;
    throw e;
  }
  throw new Error("expected a DatasetFileError");
};

describe("decodeTextFile", () => {
  it("decodeTextFile(bytes) returns the text without a UTF-8 byte-order mark", () => {
    expect(decodeTextFile(new Uint8Array([0xef, 0xbb, 0xbf, ...enc("time,gfp\n0,1\n")]))).toBe("time,gfp\n0,1\n");
  });
  it("decodeTextFile refuses an empty file, a NUL byte and invalid UTF-8, naming the field and the byte", () => {
    expect(errorOf(() => decodeTextFile(new Uint8Array(0)))).toBe("file: is empty");
    expect(errorOf(() => decodeTextFile(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0x00])))).toMatch(/^file: is binary, not text \(a NUL byte at byte 8\)/);
    // 0xC3 must be followed by a continuation byte (RFC 3629): "a,\xC3(" breaks at byte 2.
    expect(errorOf(() => decodeTextFile(new Uint8Array([0x61, 0x2c, 0xc3, 0x28])))).toMatch(/^file: is not UTF-8 text \(invalid byte sequence near byte 2\)/);
    expect(errorOf(() => decodeTextFile(enc(" \n\n")))).toBe("file: is empty (only blank space)");
  });
});

describe("parseDatasetCsv", () => {
  it("parseDatasetCsv(series) reads a header, a time column and reporters, skipping blank lines", () => {
    const { parsed, warnings } = parseDatasetCsv("time,gfp,rfp\r\n0,10,1\r\n\r\n5,12.5,2e1\r\n", "series");
    expect(parsed).toEqual({ kind: "series", time_column: "time", columns: ["gfp", "rfp"], time: [0, 5], values: [[10, 12.5], [1, 20]] });
    expect(warnings).toEqual([]);
  });
  it("parseDatasetCsv guesses tab and semicolon delimiters", () => {
    expect(parseDatasetCsv("t\tgfp\n0\t1\n1\t2\n", "series").parsed.columns).toEqual(["gfp"]);
    expect(parseDatasetCsv("t;gfp\n0;1\n1;2\n", "series").parsed.columns).toEqual(["gfp"]);
  });
  it("parseDatasetCsv(snapshot) reads one cell per row, with or without a header", () => {
    expect(parseDatasetCsv("gfp\n100\n120\n80\n", "snapshot").parsed).toEqual({ kind: "snapshot", columns: ["gfp"], values: [[100, 120, 80]] });
    expect(parseDatasetCsv("100\n120\n", "snapshot").parsed).toEqual({ kind: "snapshot", columns: ["value"], values: [[100, 120]] });
  });
  it("names the row (header = row 1) and column of a non-number", () => {
    const csv = ["time,gfp", "0,1", "1,2", "2,3", "3,4", "4,5", "5,abc"].join("\n");
    expect(errorOf(() => parseDatasetCsv(csv, "series"))).toBe('file: row 7, column "gfp": "abc" is not a number');
  });
  it("names a row with a missing column, an empty cell, a negative time and a time out of order", () => {
    expect(errorOf(() => parseDatasetCsv("time,gfp,rfp\n0,1,2\n1,2\n", "series"))).toBe('file: row 3 has 2 values; expected 3 ("time", "gfp", "rfp")');
    expect(errorOf(() => parseDatasetCsv("time,gfp\n0,\n", "series"))).toBe('file: row 2, column "gfp": empty; every cell needs a number');
    expect(errorOf(() => parseDatasetCsv("time,gfp\n0,1\n-1,2\n", "series"))).toBe('file: row 3, column "time": -1 is negative; times start at 0 or later');
    expect(errorOf(() => parseDatasetCsv("time,gfp\n0,1\n3,2\n3,4\n", "series"))).toMatch(/^file: row 4, column "time": 3 is not after the previous time 3/);
  });
  it("refuses a series with one column, a header without rows, NaN and Infinity, duplicate names, a one-cell snapshot", () => {
    expect(errorOf(() => parseDatasetCsv("time\n0\n1\n", "series"))).toMatch(/^file: a time series needs a time column and at least one reporter column; found 1 column/);
    expect(errorOf(() => parseDatasetCsv("time,gfp\n", "series"))).toBe("file: has a header but no data rows");
    expect(errorOf(() => parseDatasetCsv("time,gfp\n0,NaN\n", "series"))).toBe('file: row 2, column "gfp": "NaN" is not a number');
    expect(errorOf(() => parseDatasetCsv("time,gfp\n0,Infinity\n", "series"))).toBe('file: row 2, column "gfp": "Infinity" is not a number');
    expect(errorOf(() => parseDatasetCsv("t,gfp,gfp\n0,1,2\n", "series"))).toBe('file: row 1: column "gfp" appears twice in the header');
    expect(errorOf(() => parseDatasetCsv("gfp\n5\n", "snapshot"))).toMatch(/^file: a snapshot needs at least 2 cells/);
  });
  it("keeps negative amounts (background-subtracted data) with a warning", () => {
    const { parsed, warnings } = parseDatasetCsv("gfp\n-1\n3\n", "snapshot");
    expect(parsed.values).toEqual([[-1, 3]]);
    expect(warnings).toEqual(['column "gfp": 1 negative value (background-subtracted?); kept as they are']);
  });
});

describe("measured statistics", () => {
  it("measuredStats gives mean, sample SD, CV and Fano in molecules (worked by hand)", () => {
    // Values 1, 2, 3, 4 a.u. at 10 molecules per unit: 10..40 molecules, mean 25,
    // sample variance ((15² + 5² + 5² + 15²)/3) = 500/3, SD 12.9099, CV 0.516398, Fano 6.6667.
    const s = measuredStats("gfp", [1, 2, 3, 4], 10);
    expect(s.n).toBe(4);
    expect(s.mean).toBeCloseTo(25, 12);
    expect(s.sd).toBeCloseTo(Math.sqrt(500 / 3), 12);
    expect(s.cv).toBeCloseTo(Math.sqrt(500 / 3) / 25, 12);
    expect(s.fano).toBeCloseTo(500 / 3 / 25, 12);
    expect([s.min, s.max]).toEqual([10, 40]);
  });
  it("measuredStats leaves CV and Fano out when the mean is not positive", () => {
    const s = measuredStats("x", [-1, 1], 1);
    expect(s.cv).toBeNull();
    expect(s.fano).toBeNull();
  });
  it("histogram(values) puts every value in a bin and its density integrates to 1", () => {
    const xs = Array.from({ length: 1000 }, (_, i) => (i * 7919) % 1000);
    const h = histogram(xs, 25);
    expect(h.reduce((a, b) => a + b.count, 0)).toBe(1000);
    expect(h.reduce((a, b) => a + b.density * (b.x1 - b.x0), 0)).toBeCloseTo(1, 12);
  });
});

describe("upload fields", () => {
  const base = { lab_id: "1", name: "Plate 3", kind: "snapshot" };
  it("a factor is required unless amounts are molecules, and then defaults to 1", () => {
    expect(DatasetUploadFields.parse({ ...base, amount_unit: "molecules" }).molecules_per_unit).toBe(1);
    const r = DatasetUploadFields.safeParse({ ...base, amount_unit: "a.u." });
    expect(r.success).toBe(false);
    expect(r.error!.issues[0]!.path).toEqual(["molecules_per_unit"]);
    expect(DatasetUploadFields.safeParse({ ...base, amount_unit: "a.u.", molecules_per_unit: "-2" }).success).toBe(false);
  });
  it("a series needs a time unit", () => {
    const r = DatasetUploadFields.safeParse({ ...base, kind: "series" });
    expect(r.error!.issues[0]!.path).toEqual(["time_unit"]);
  });
});

describe("overlay helpers", () => {
  const series: DatasetJson = {
    id: "1", lab_id: "1", name: "S", kind: "series", description: null, file_name: "s.csv", content_type: "text/csv", size_bytes: 1, sha256: "0".repeat(64),
    units: { time_unit: "h", amount_unit: "a.u.", molecules_per_unit: 2 }, columns: ["gfp"], time_column: "time", rows: 2,
    stats: [measuredStats("gfp", [5, 7], 2)], warnings: [], created_by: null, created_at: "2026-01-01T00:00:00Z",
    values: { kind: "series", time_column: "time", columns: ["gfp"], time: [0, 1.5], values: [[5, 7]] },
  };
  it("seriesOverlayPoints converts hours to the run's minutes and a.u. to molecules or model units", () => {
    expect(timeFactor("h", "min")).toBe(60);
    expect(seriesOverlayPoints(series, { timeUnit: "min", amount: "molecules" })).toEqual([
      { t: 0, value: 10, reporter: "gfp" }, { t: 90, value: 14, reporter: "gfp" },
    ]);
    // Ω = 0.5 molecules per nM: 10 molecules are 20 nM.
    expect(seriesOverlayPoints(series, { timeUnit: "h", amount: "model", omega: 0.5 })[0]).toEqual({ t: 0, value: 20, reporter: "gfp" });
    expect(() => amountFactor(series.units, { timeUnit: "min", amount: "model" })).toThrow(RangeError);
  });
  it("snapshotOverlayBins counts into a run's own bin edges; measuredNoiseRows says the basis", () => {
    const snap: DatasetJson = { ...series, kind: "snapshot", units: { time_unit: null, amount_unit: "molecules", molecules_per_unit: 1 }, values: { kind: "snapshot", columns: ["gfp"], values: [[0, 1, 1, 2, 9]] } };
    const bins = snapshotOverlayBins(snap, "gfp", { timeUnit: "min", amount: "molecules" }, { edges: [0, 1, 2, 3] });
    expect(bins.map((b) => b.count)).toEqual([1, 2, 1]); // 9 lies outside the run's range
    expect(measuredNoiseRows(snap)[0]!.basis).toBe("across cells");
  });
});
