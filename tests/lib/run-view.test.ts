import { describe, expect, it } from "vitest";

import { bandsSpec, histogramSpec, traceSpec } from "@/lib/view/run-charts";
import {
  etaSeconds, formatDuration, formatNumber, histogramOf, momentsOf, splitApiError, valuesAfterBurnIn,
  type CellJson, type SummaryJson,
} from "@/lib/view/run-view";

describe("etaSeconds", () => {
  const started = "2026-01-01T00:00:00.000Z";
  const t0 = Date.parse(started);

  it("etaSeconds(run, now) is elapsed·(1−p)/p: 40 s in at 40% leaves 60 s (worked by hand)", () => {
    expect(etaSeconds({ status: "running", progress: 0.4, started_at: started }, t0 + 40_000)).toBeCloseTo(60, 9);
  });

  it("etaSeconds(run, now) is null before any progress, when finished, or when not started", () => {
    expect(etaSeconds({ status: "running", progress: 0, started_at: started }, t0 + 1000)).toBeNull();
    expect(etaSeconds({ status: "succeeded", progress: 1, started_at: started }, t0 + 1000)).toBeNull();
    expect(etaSeconds({ status: "queued", progress: 0.5, started_at: null }, t0)).toBeNull();
  });
});

describe("formatting", () => {
  it("formatDuration(s) reads as people write durations", () => {
    expect(formatDuration(0.42)).toBe("0.4 s");
    expect(formatDuration(42)).toBe("42 s");
    expect(formatDuration(185)).toBe("3 min 5 s");
    expect(formatDuration(7800)).toBe("2 h 10 min");
    expect(formatDuration(null)).toBe("—");
  });

  it("formatNumber(v) keeps four significant digits and switches to exponents for very large or small values", () => {
    expect(formatNumber(0.123456)).toBe("0.1235");
    expect(formatNumber(1234.5678)).toBe("1235");
    expect(formatNumber(2.5e7)).toBe("2.500e7");
    expect(formatNumber(null)).toBe("—");
    expect(formatNumber(NaN)).toBe("—");
  });
});

describe("histograms", () => {
  it("histogramOf(counts) gives one unit bin per molecule count when the range is small", () => {
    const h = histogramOf([3, 4, 4, 6]);
    expect(h.edges).toEqual([2.5, 3.5, 4.5, 5.5, 6.5]);
    expect(h.counts).toEqual([1, 2, 0, 1]);
  });

  it("histogramOf(values) bins non-integers in ⌈√n⌉ equal bins and counts every value once", () => {
    const values = Array.from({ length: 100 }, (_, k) => k / 10 + 0.05);
    const h = histogramOf(values);
    expect(h.counts).toHaveLength(10);
    expect(h.counts.reduce((a, b) => a + b, 0)).toBe(100);
    expect(h.edges[0]).toBe(0.05);
    expect(h.edges[10]).toBeCloseTo(9.95, 12);
  });
});

describe("sample-cell statistics", () => {
  const cell = (index: number, a: number[]): CellJson => ({
    seed: 1, index, units: "molecules", species: ["A"], times: [0, 1, 2, 3], values: { A: a }, events: 0, method: "ssa", time_unit: "min", amount_unit: "molecules", warnings: [],
  });

  it("valuesAfterBurnIn(cells, sp, b) pools grid values at t ≥ b across cells", () => {
    expect(valuesAfterBurnIn([cell(0, [9, 1, 2, 3]), cell(1, [9, 4, 5, 6])], "A", 1)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it("momentsOf(values) uses the n−1 variance: [1..6] has mean 3.5, variance 3.5, Fano 1 (worked by hand)", () => {
    const m = momentsOf([1, 2, 3, 4, 5, 6]);
    expect(m.mean).toBe(3.5);
    expect(m.sd).toBeCloseTo(Math.sqrt(3.5), 12);
    expect(m.fano).toBeCloseTo(1, 12);
  });
});

describe("splitApiError", () => {
  it("splitApiError(e) finds the field of CONTRACT.md's `<field>: <reason>` errors", () => {
    expect(splitApiError("dt: must be <= t_end (10)")).toEqual({ field: "dt", reason: "must be <= t_end (10)" });
    expect(splitApiError('overrides.Kc: unknown parameter "Kc"')).toEqual({ field: "overrides.Kc", reason: 'unknown parameter "Kc"' });
    expect(splitApiError("body: must be JSON").field).toBeNull();
    expect(splitApiError("something broke").field).toBeNull();
  });
});

describe("chart specifications", () => {
  const s: SummaryJson = {
    method: "ssa", seed: 7, runs: 10, units: "molecules", species: ["X"], times: [0, 1],
    mean: { X: [0, 1] }, sd: { X: [0, 1] },
    quantiles: { X: { p05: [0, 0], p25: [0, 1], p50: [0, 1], p75: [0, 2], p95: [0, 3] } },
    final: {}, stationary: {}, period: {}, events: 0, wall_s: 0, trace: { X: [0, 0.9] },
  };

  it("bandsSpec(summary) draws both bands, the median, the mean and the trace, with units in the axis titles", () => {
    const spec = bandsSpec(s, "X", { time: "min", amount: "molecules" }) as any;
    expect(spec.layer.map((l: any) => l.mark.type)).toEqual(["area", "area", "line"]);
    const lineLayers = new Set(spec.layer[2].data.values.map((r: any) => r.layer));
    expect([...lineLayers]).toEqual(["Median", "Mean", "Mean-field trace"]);
    expect(spec.encoding.x.title).toBe("Time (min)");
    expect(spec.layer[0].encoding.y.title).toBe("X (molecules)");
    expect(spec.title.text).toMatch(/X: 10 cells/);
  });

  it("a run with a schedule marks each change that fired with a dotted rule (bands and trace charts); one without has no such layer", () => {
    const scheduled = { ...s, schedule: [{ at: 1, set: { km: 2, X: 0 } }] };
    for (const spec of [bandsSpec(scheduled, "X", { time: "min", amount: "molecules" }), traceSpec(scheduled, { time: "min", amount: "molecules" })] as any[]) {
      const rules = spec.layer.filter((l: any) => l.mark.type === "rule");
      expect(rules).toHaveLength(1);
      expect(rules[0].data.values).toEqual([{ t: 1, change: "km = 2, X = 0", kind: "at" }]);
      expect(spec.title.subtitle).toMatch(/dotted lines: scheduled changes$/);
    }
    expect((bandsSpec(s, "X", { time: "min", amount: "molecules" }) as any).layer.some((l: any) => l.mark.type === "rule")).toBe(false);
  });

  it("histogramSpec(h) has a bar per bin and a rule at the mean", () => {
    const spec = histogramSpec({ edges: [0, 1, 2], counts: [3, 4] }, { title: "T", xTitle: "Period (min)", what: "Periods", mean: 1 }) as any;
    expect(spec.layer[0].data.values).toHaveLength(2);
    expect(spec.layer[1].mark.type).toBe("rule");
  });
});
