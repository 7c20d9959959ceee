import { describe, expect, it } from "vitest";

import { NOISE_CSV_HEADER, comparisonProgress, intervalSpec, noiseTableCsv, sweepSpec, type ComparisonJson, type ComparisonResultsJson } from "@/lib/view/comparison-view";
import { describeIssue } from "@/lib/schemas/common";
import { ComparisonCreate, axisValues, formatValue, sweepDesigns } from "@/lib/schemas/comparisons";

const iv = (value: number, lo: number, hi: number) => ({ value, lo, hi });
const settings = { t_end: 100, dt: 1, runs: 50 };

function firstError(body: unknown): string {
  const r = ComparisonCreate.safeParse(body);
  return r.success ? "" : describeIssue(r.error.issues[0]!);
}

describe("sweeps", () => {
  it("axisValues(log 5 → 80, 3 points) is 5, 20, 80 (geometric), linear ranges are evenly spaced, lists stay as given", () => {
    expect(axisValues({ parameter: "k", scale: "log", from: 5, to: 80, points: 3 })).toEqual([5, 20, 80]);
    expect(axisValues({ parameter: "k", scale: "log", from: 1, to: 1000, points: 4 })).toEqual([1, 10, 100, 1000]);
    expect(axisValues({ parameter: "k", scale: "linear", from: 0, to: 1, points: 5 })).toEqual([0, 0.25, 0.5, 0.75, 1]);
    expect(axisValues({ parameter: "k", scale: "list", values: [3, 1, 2] })).toEqual([3, 1, 2]);
  });

  it("sweepDesigns(grid of 2 × 3) gives 6 designs, the first axis outermost, labelled by their values", () => {
    const d = sweepDesigns({ axes: [{ parameter: "k", scale: "list", values: [1, 2] }, { parameter: "g", scale: "list", values: [0.1, 0.2, 0.3] }] });
    expect(d.map((x) => x.label)).toEqual(["k = 1, g = 0.1", "k = 1, g = 0.2", "k = 1, g = 0.3", "k = 2, g = 0.1", "k = 2, g = 0.2", "k = 2, g = 0.3"]);
    expect(d[4]!.values).toEqual({ k: 2, g: 0.2 });
    expect(formatValue(1 / 3)).toBe("0.3333");
    expect(formatValue(2.5e-5)).toBe("2.5e-5");
  });

  it("ComparisonCreate names the field: a log range through 0, too many designs, one design, both kinds", () => {
    const sweep = (axes: unknown[]) => ({ lab_id: 1, name: "x", sweep: { version_id: 2, axes }, settings });
    expect(firstError(sweep([{ parameter: "k", scale: "log", from: 0, to: 5, points: 3 }]))).toBe("sweep.axes[0].from: must be > 0 on a log range");
    expect(firstError(sweep([{ parameter: "k", scale: "log", from: 1, to: -5, points: 3 }]))).toBe("sweep.axes[0].to: must be > 0 on a log range");
    expect(firstError(sweep([{ parameter: "k", scale: "linear", from: 1, to: 5, points: 5 }, { parameter: "g", scale: "linear", from: 1, to: 5, points: 5 }])))
      .toBe("sweep.axes: gives 25 designs; at most 24 per comparison");
    expect(firstError(sweep([{ parameter: "k", scale: "list", values: [1, 2] }, { parameter: "k", scale: "list", values: [1, 2] }])))
      .toBe("sweep.axes[1].parameter: must differ from the first axis' parameter");
    expect(firstError({ lab_id: 1, name: "x", designs: Array.from({ length: 25 }, () => ({ version_id: 2 })), settings })).toBe("designs: gives 25 designs; at most 24 per comparison");
    expect(firstError({ lab_id: 1, name: "x", designs: [{ version_id: 2 }], settings })).toBe("designs: gives 1 design; a comparison needs at least 2");
    expect(firstError({ lab_id: 1, name: "x", settings })).toBe("designs: send exactly one of designs or sweep");
    expect(firstError({ lab_id: 1, name: "x", designs: [{ version_id: 2 }, { version_id: 3 }], settings: { ...settings, dt: 500 } })).toBe("settings.dt: must be <= t_end (100)");
    expect(firstError({ lab_id: 1, name: "x", designs: [{ version_id: 2 }, { version_id: 3 }], settings })).toBe("");
  });
});

const results: ComparisonResultsJson = {
  format: "burstwise.comparison-results/1", computed_at: "2026-12-20T00:00:00.000Z", level: 0.95, replicates: 2000, bootstrap_seed: 7,
  method: "ssa", time_unit: "min", amount_unit: "molecules", lna_curve: { parameter: "k", scale: "log", group: null, points: [{ x: 5, group: null, cv: { X: 0.3 } }, { x: 20, group: null, cv: { X: 0.15 } }] },
  designs: [
    {
      design_id: "11", position: 0, label: "k = 5", run_id: "101", seed: 7, cells: 200, values: { k: 5 }, lna: { stable: true, oscillatory: false, note: "LNA" },
      species: [{ species: "X", mean: iv(10, 9.8, 10.2), sd: iv(3.2, 3.1, 3.3), cv: iv(0.32, 0.31, 0.33), fano: iv(1.02, 0.98, 1.06), period_mean: null, period_cv: null, period_count: 0, oscillating: false, lna_cv: 0.316, lna_fano: 1 }],
    },
    {
      design_id: "12", position: 1, label: "k = 20", run_id: "102", seed: 8, cells: 200, values: { k: 20 }, lna: { stable: true, oscillatory: false, note: "LNA" },
      species: [{ species: "X", mean: iv(40, 39.5, 40.5), sd: iv(6.3, 6.2, 6.4), cv: iv(0.158, 0.155, 0.161), fano: iv(0.99, 0.95, 1.03), period_mean: null, period_cv: null, period_count: 0, oscillating: false, lna_cv: 0.158, lna_fano: 1 }],
    },
  ],
};
const design = (id: string, position: number, label: string, run: ComparisonJson["designs"][number]["run"]) => ({
  id, position, label, version_id: "2", circuit_id: "3", circuit_name: "Birth, death", version_number: 1, overrides: {}, values: { k: position === 0 ? 5 : 20 }, run,
});
const comparison: ComparisonJson = {
  id: "9", lab_id: "1", name: "Sweep", description: null, kind: "sweep",
  sweep: { version_id: "2", axes: [{ parameter: "k", scale: "log", from: 5, to: 20, points: 2 }] },
  settings: { method: "ssa", t_end: 100, dt: 1, runs: 200 }, seed: 7, common_seed: false, status: "succeeded", error: null, progress: 1,
  created_by: "m@x", created_at: "", launched_at: null, finished_at: null,
  designs: [
    design("11", 0, "k = 5", { id: "101", status: "succeeded", error: null, chunks_done: 4, chunks_total: 4, seed: 7 }),
    design("12", 1, "k = 20", { id: "102", status: "succeeded", error: null, chunks_done: 4, chunks_total: 4, seed: 8 }),
    design("13", 2, "k = 80", null),
  ],
  results,
};

describe("exports and charts", () => {
  it("noiseTableCsv writes one row per design and species with the interval beside each estimate, and empty fields where there is none", () => {
    const lines = noiseTableCsv(comparison).split("\r\n");
    expect(lines[0]).toBe(NOISE_CSV_HEADER.join(","));
    expect(lines).toHaveLength(5); // header, two designs with results, one without, and the final line end
    // Fields split on commas outside quotes (RFC 4180; the circuit name holds a comma).
    const cols = (l: string) => (l.match(/("([^"]|"")*"|[^,]*)(,|$)/g) ?? []).map((f) => f.replace(/,$/, "")).slice(0, NOISE_CSV_HEADER.length);
    const h = cols(lines[0]!);
    const second = cols(lines[2]!);
    expect(second[h.indexOf("design")]).toBe("k = 20");
    expect(second[h.indexOf("cv_lo")]).toBe("0.155");
    expect(second[h.indexOf("period_cv")]).toBe("");
    expect(second[h.indexOf("parameters")]).toBe("k=20");
    expect(lines[1]).toMatch(/^k = 5,11,0,"Birth, death",1,101,7,200,k=5,X,10,9.8,10.2,/);
    expect(cols(lines[3]!)[h.indexOf("species")]).toBe("");
    expect(lines[4]).toBe("");
  });

  it("comparisonProgress counts chunks over every launched design; intervalSpec and sweepSpec plot every design, the sweep on log axes", () => {
    expect(comparisonProgress({ status: "running", designs: [
      design("1", 0, "a", { id: "1", status: "succeeded", error: null, chunks_done: 4, chunks_total: 4, seed: 1 }),
      design("2", 1, "b", { id: "2", status: "running", error: null, chunks_done: 1, chunks_total: 4, seed: 2 }),
    ] })).toBe(5 / 8);
    const spec = intervalSpec(results, "cv", ["X"]) as { layer: { data: { values: unknown[] } }[] };
    expect(spec.layer[0]!.data.values).toHaveLength(2);
    expect(spec.layer).toHaveLength(3); // whiskers, dots, LNA diamonds
    const sweep = sweepSpec(comparison, results, "cv", "X") as { layer: { data: { values: { x: number }[] }; encoding: { x: { scale: { type: string } } } }[] };
    expect(sweep.layer[0]!.data.values.map((p) => p.x)).toEqual([5, 20]); // the LNA curve first
    expect(sweep.layer[1]!.encoding.x.scale.type).toBe("log");
    expect(sweepSpec(comparison, results, "period_cv", "X")).toBeNull();
  });
});
