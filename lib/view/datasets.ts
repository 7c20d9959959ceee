// Measured data: reading an uploaded file's text, parsing a CSV into a time series or a
// single-cell snapshot, and the measured noise statistics. Pure (no I/O): the upload route,
// the Data page and the run page's overlay all use these.
import Papa from "papaparse";

import { DATASET_LIMITS, ParsedDataset, type ColumnStats, type DatasetKind, type TimeUnit } from "@/lib/schemas/datasets";

/** A file that cannot be stored, with a message naming the field, and the row or column. */
export class DatasetFileError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "DatasetFileError";
  }
}

const fail = (field: string, msg: string): never => {
  throw new DatasetFileError(`${field}: ${msg}`);
};

/** Size in bytes as people read it: 1.5 MB, 12 KB. */
export function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1).replace(/\.0$/, "")} MB`;
  if (n >= 1024) return `${Math.round(n / 1024)} KB`;
  return `${n} bytes`;
}

/**
 * The text of an uploaded file, refusing what is not text: an empty file, a NUL byte (binary
 * content such as a spreadsheet or an image renamed .csv) or bytes that are not UTF-8.
 * A UTF-8 byte-order mark is dropped.
 * @throws DatasetFileError naming `field` and the byte offset.
 */
export function decodeTextFile(bytes: Uint8Array, field = "file"): string {
  if (bytes.length === 0) fail(field, "is empty");
  const nul = bytes.indexOf(0);
  if (nul >= 0) fail(field, `is binary, not text (a NUL byte at byte ${nul}); upload a CSV text file`);
  let text = "";
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    fail(field, `is not UTF-8 text (invalid byte sequence near byte ${firstInvalidUtf8(bytes)}); save it as UTF-8 CSV`);
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  if (!text.trim()) fail(field, "is empty (only blank space)");
  return text;
}

/** Offset of the first byte that breaks UTF-8 (RFC 3629 §4; overlongs and surrogates included). */
function firstInvalidUtf8(b: Uint8Array): number {
  let i = 0;
  while (i < b.length) {
    const c = b[i]!;
    const len = c < 0x80 ? 1 : c >= 0xc2 && c <= 0xdf ? 2 : c >= 0xe0 && c <= 0xef ? 3 : c >= 0xf0 && c <= 0xf4 ? 4 : 0;
    if (len === 0 || i + len > b.length) return i;
    for (let k = 1; k < len; k++) if ((b[i + k]! & 0xc0) !== 0x80) return i;
    i += len;
  }
  return i;
}

// A decimal number as people write it in a CSV: 12, -0.5, .25, 1e-3. No thousands separators,
// no "NaN"/"Infinity" (a measurement must be a finite number).
const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const toNumber = (s: string): number | null => {
  const t = s.trim();
  if (!NUMBER.test(t)) return null;
  const x = Number(t);
  return Number.isFinite(x) ? x : null;
};

/**
 * The delimiter of the first non-blank line: whichever of comma, tab and semicolon occurs most
 * there outside quotes (comma on a tie). Blank lines are kept for row numbers, which defeats
 * papaparse's own guess.
 */
function guessDelimiter(text: string): string {
  const line = text.split(/\r\n|\n|\r/).find((l) => l.trim() !== "") ?? "";
  const unquoted = line.replace(/"[^"]*"/g, "");
  let best = ",";
  let bestCount = 0;
  for (const d of [",", "\t", ";"]) {
    const count = unquoted.split(d).length - 1;
    if (count > bestCount) {
      best = d;
      bestCount = count;
    }
  }
  return best;
}

const quoteCell = (s: string) => JSON.stringify(s.length > 40 ? `${s.slice(0, 40)}…` : s);

/**
 * Parses CSV text into a dataset. A series: the first column is time (≥ 0, increasing), every
 * other column a reporter. A snapshot: each row one cell, each column a reporter. A header row
 * (names) is used when no field of the first row is a number. Rows count from 1 with the
 * header, as a spreadsheet shows them.
 * @throws DatasetFileError naming the row and column, e.g. `file: row 7, column "gfp": "abc" is not a number`.
 */
export function parseDatasetCsv(text: string, kind: DatasetKind, field = "file"): { parsed: ParsedDataset; warnings: string[] } {
  const result = Papa.parse<string[]>(text, { skipEmptyLines: false, delimiter: guessDelimiter(text) });
  const quoteError = result.errors.find((e) => e.type === "Quotes");
  if (quoteError) fail(field, `row ${(quoteError.row ?? 0) + 1}: ${quoteError.message.toLowerCase()}`);
  const rows = result.data
    .map((cells, i) => ({ cells, row: i + 1 }))
    .filter((r) => r.cells.some((c) => c.trim() !== ""));
  if (rows.length === 0) fail(field, "is empty");
  const first = rows[0]!;
  const hasHeader = first.cells.every((c) => toNumber(c) === null);
  const width = first.cells.length;
  if (width > DATASET_LIMITS.maxColumns) fail(field, `has ${width} columns; at most ${DATASET_LIMITS.maxColumns}`);
  let columns: string[];
  if (hasHeader) {
    columns = first.cells.map((c) => c.trim());
    columns.forEach((c, j) => {
      if (!c) fail(field, `row ${first.row}, column ${j + 1}: the header names no column`);
      if (columns.indexOf(c) !== j) fail(field, `row ${first.row}: column ${quoteCell(c)} appears twice in the header`);
    });
  } else {
    columns = kind === "series"
      ? ["time", ...Array.from({ length: width - 1 }, (_, j) => (width === 2 ? "value" : `value${j + 1}`))]
      : Array.from({ length: width }, (_, j) => (width === 1 ? "value" : `value${j + 1}`));
  }
  if (kind === "series" && width < 2) {
    fail(field, `a time series needs a time column and at least one reporter column; found ${width} column${width === 1 ? "" : "s"} (is the delimiter a comma, tab or semicolon?)`);
  }
  const data = hasHeader ? rows.slice(1) : rows;
  if (data.length === 0) fail(field, "has a header but no data rows");
  if (data.length > DATASET_LIMITS.maxRows) fail(field, `has ${data.length} data rows; at most ${DATASET_LIMITS.maxRows}`);
  if (data.length * width > DATASET_LIMITS.maxCells) fail(field, `has ${data.length * width} values; at most ${DATASET_LIMITS.maxCells}`);

  const byColumn: number[][] = columns.map(() => new Array<number>(data.length));
  const listed = columns.map((c) => quoteCell(c)).join(", ");
  data.forEach(({ cells, row }, i) => {
    if (cells.length !== width) {
      fail(field, `row ${row} has ${cells.length} value${cells.length === 1 ? "" : "s"}; expected ${width} (${listed})`);
    }
    for (let j = 0; j < width; j++) {
      const raw = cells[j]!;
      if (raw.trim() === "") fail(field, `row ${row}, column ${quoteCell(columns[j]!)}: empty; every cell needs a number`);
      const x = toNumber(raw);
      if (x === null) fail(field, `row ${row}, column ${quoteCell(columns[j]!)}: ${quoteCell(raw.trim())} is not a number`);
      byColumn[j]![i] = x!;
    }
  });

  const warnings: string[] = [];
  let parsed: ParsedDataset;
  if (kind === "series") {
    const time = byColumn[0]!;
    time.forEach((t, i) => {
      const row = data[i]!.row;
      if (t < 0) fail(field, `row ${row}, column ${quoteCell(columns[0]!)}: ${t} is negative; times start at 0 or later`);
      if (i > 0 && !(t > time[i - 1]!)) fail(field, `row ${row}, column ${quoteCell(columns[0]!)}: ${t} is not after the previous time ${time[i - 1]}; rows must be in time order`);
    });
    parsed = { kind: "series", time_column: columns[0]!, columns: columns.slice(1), time, values: byColumn.slice(1) };
  } else {
    if (data.length < 2) fail(field, `a snapshot needs at least 2 cells (rows) to measure a spread; found ${data.length}`);
    parsed = { kind: "snapshot", columns, values: byColumn };
  }
  parsed.values.forEach((v, j) => {
    const negative = v.filter((x) => x < 0).length;
    if (negative) warnings.push(`column ${quoteCell(parsed.columns[j]!)}: ${negative} negative value${negative === 1 ? "" : "s"} (background-subtracted?); kept as they are`);
  });
  return { parsed: ParsedDataset.parse(parsed), warnings };
}

/**
 * Mean, sample SD (n − 1), CV = SD/mean and Fano factor = variance/mean of `values` × `factor`
 * (molecules per unit), by Welford's one-pass update (Welford 1962, Technometrics 4:419).
 * CV and Fano are null when the mean is not positive (textbook definitions need mean > 0).
 */
export function measuredStats(column: string, values: readonly number[], factor: number): ColumnStats {
  let n = 0;
  let mean = 0;
  let m2 = 0;
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    const x = v * factor;
    n += 1;
    const d = x - mean;
    mean += d / n;
    m2 += d * (x - mean);
    if (x < min) min = x;
    if (x > max) max = x;
  }
  const variance = n > 1 ? m2 / (n - 1) : 0;
  const sd = Math.sqrt(variance);
  return { column, n, mean, sd, cv: mean > 0 ? sd / mean : null, fano: mean > 0 ? variance / mean : null, min, max };
}

/** Measured statistics of every reporter, in molecules. For a series they are over its time points. */
export function datasetStats(parsed: ParsedDataset, moleculesPerUnit: number): ColumnStats[] {
  return parsed.columns.map((c, j) => measuredStats(c, parsed.values[j]!, moleculesPerUnit));
}

export interface HistogramBin { x0: number; x1: number; count: number; density: number }

/**
 * Equal-width histogram of `values` with `bins` bins over [min, max]; `density` is
 * count / (n · width), so the bars integrate to 1 like a probability density.
 */
export function histogram(values: readonly number[], bins = 30): HistogramBin[] {
  const n = values.length;
  if (n === 0) return [];
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (hi === lo) return [{ x0: lo - 0.5, x1: hi + 0.5, count: n, density: 1 }]; // one bin of width 1
  const width = (hi - lo) / bins;
  const counts = new Array<number>(bins).fill(0);
  for (const v of values) counts[Math.min(bins - 1, Math.floor((v - lo) / width))]! += 1;
  return counts.map((count, k) => ({ x0: lo + k * width, x1: lo + (k + 1) * width, count, density: count / (n * width) }));
}

/** Minutes per time unit, to put a series on a circuit's time axis. */
const MINUTES: Record<TimeUnit, number> = { s: 1 / 60, min: 1, h: 60 };

/** Factor taking a time in `from` units to `to` units (e.g. h → min is 60). */
export const timeFactor = (from: TimeUnit, to: TimeUnit): number => MINUTES[from] / MINUTES[to];

/** Evenly spaced indices (first and last kept) so a chart draws at most `max` points. */
export function thinIndices(n: number, max: number): number[] {
  if (n <= max) return Array.from({ length: n }, (_, i) => i);
  const step = (n - 1) / (max - 1);
  return Array.from({ length: max }, (_, k) => Math.round(k * step));
}
