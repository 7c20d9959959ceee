import { describe, expect, it } from "vitest";

import { bandsCsv, cellCsv, csvField, exportFileName, noiseCsv, toCsv } from "@/lib/view/run-export";
import type { CellJson, SummaryJson } from "@/lib/view/run-view";

// A two-species, three-time summary written by hand (values are arbitrary but distinct, so a
// transposed or shifted column shows up).
const summary: SummaryJson = {
  method: "ssa", seed: 42, runs: 100, units: "molecules", species: ["A", "B"], times: [0, 1, 2],
  mean: { A: [0, 1.5, 2.5], B: [10, 11, 12] },
  sd: { A: [0, 0.5, 0.7], B: [1, 2, 3] },
  quantiles: {
    A: { p05: [0, 1, 1], p25: [0, 1, 2], p50: [0, 2, 3], p75: [0, 2, 3], p95: [0, 3, 4] },
    B: { p05: [8, 9, 9], p25: [9, 10, 11], p50: [10, 11, 12], p75: [11, 12, 13], p95: [12, 13, 14] },
  },
  final: { A: { mean: 2.5, variance: 0.49, cv: 0.28, fano: 0.196 }, B: { mean: 12, variance: 9, cv: 0.25, fano: 0.75 } },
  stationary: { A: { mean: 2, variance: 4, cv: 1, fano: 2 }, B: { mean: 11, variance: null, cv: null, fano: null } },
  period: {
    A: { count: 0, mean: null, sd: null, cv: null, histogram: { edges: [], counts: [] } },
    B: { count: 7, mean: 30, sd: 3, cv: 0.1, histogram: { edges: [25, 30, 35], counts: [3, 4] }, amplitude: { mean: 5, sd: 1 } },
  },
  events: 1000, wall_s: 0.5, burn_in: 0.4, time_unit: "min", amount_unit: "nM", omega: 0.602,
  trace: { A: [0, 1.4, 2.4], B: [10, 10.9, null] },
};

const lines = (csv: string) => csv.split("\r\n").slice(0, -1);

describe("csvField and toCsv", () => {
  it("csvField(v) leaves plain text and numbers alone and quotes commas, quotes and line breaks (RFC 4180)", () => {
    expect(csvField("A")).toBe("A");
    expect(csvField(0.1)).toBe("0.1");
    expect(csvField(1e-20)).toBe("1e-20");
    expect(csvField('a,"b"')).toBe('"a,""b"""');
    expect(csvField("x\ny")).toBe('"x\ny"');
  });

  it("csvField(v) writes null, undefined, NaN and ±Infinity as an empty field", () => {
    for (const v of [null, undefined, NaN, Infinity, -Infinity]) expect(csvField(v)).toBe("");
  });

  it("toCsv(rows) ends every row, the last included, with CRLF", () => {
    expect(toCsv([["a", "b"], [1, 2]])).toBe("a,b\r\n1,2\r\n");
  });
});

describe("bandsCsv", () => {
  it("bandsCsv(summary) has a header naming the time unit, then one row per species and grid time", () => {
    const rows = lines(bandsCsv(summary));
    expect(rows[0]).toBe("species,time_min,mean,sd,p05,p25,p50,p75,p95,mean_field,unit");
    expect(rows).toHaveLength(1 + 2 * 3);
  });

  it("bandsCsv(summary) puts each statistic in its own column at the right time", () => {
    const rows = lines(bandsCsv(summary));
    expect(rows[2]).toBe("A,1,1.5,0.5,1,1,2,2,3,1.4,molecules");
    expect(rows[6]).toBe("B,2,12,3,9,11,12,13,14,,molecules"); // null trace value → empty field
  });

  it("bandsCsv(summary) labels model-unit summaries with the circuit's amount unit and leaves mean_field empty without a trace", () => {
    const { trace: _t, ...noTrace } = summary;
    const rows = lines(bandsCsv({ ...noTrace, units: "model" }));
    expect(rows[1]).toBe("A,0,0,0,0,0,0,0,0,,nM");
  });
});

describe("noiseCsv", () => {
  it("noiseCsv(summary) writes one row per species with SD = √variance and the period columns", () => {
    const rows = lines(noiseCsv(summary));
    expect(rows[0]).toBe(
      "species,stationary_mean,stationary_sd,stationary_cv,stationary_fano,final_mean,final_sd,final_cv,final_fano," +
      "period_count,period_mean_min,period_sd_min,period_cv,amplitude_mean,amplitude_sd,burn_in_min,unit");
    expect(rows).toHaveLength(3);
    expect(rows[1]).toBe("A,2,2,1,2,2.5,0.7,0.28,0.196,0,,,,,,0.4,molecules");
    expect(rows[2]).toBe("B,11,,,,12,3,0.25,0.75,7,30,3,0.1,5,1,0.4,molecules");
  });

  it("noiseCsv(summary, lna) adds the LNA CV and Fano columns beside", () => {
    const rows = lines(noiseCsv(summary, { covariance: [[1]], cv: { A: 0.9, B: null }, fano: { A: 1.8, B: null } }));
    expect(rows[0]).toContain(",lna_cv,lna_fano,burn_in_min,unit");
    expect(rows[1]).toMatch(/,0\.9,1\.8,0\.4,molecules$/);
    expect(rows[2]).toMatch(/,,,0\.4,molecules$/);
  });
});

describe("cellCsv", () => {
  const cell: CellJson = {
    seed: 42, index: 3, units: "molecules", species: ["A", "B"], times: [0, 0.5, 1],
    values: { A: [0, 1, 2], B: [5, 4, 3] }, events: 9, method: "ssa", time_unit: "h", amount_unit: "molecules", warnings: [],
  };

  it("cellCsv(cell) has seed, cell index, time and one column per species, one row per grid time", () => {
    expect(cellCsv(cell)).toBe("seed,cell,time_h,A,B\r\n42,3,0,0,5\r\n42,3,0.5,1,4\r\n42,3,1,2,3\r\n");
  });
});

describe("exportFileName", () => {
  it("exportFileName(id, what, ext) keeps only safe characters", () => {
    expect(exportFileName("12", "cell 3", "csv")).toBe("run-12-cell-3.csv");
    expect(exportFileName("12", "bands A/B", "svg")).toBe("run-12-bands-A-B.svg");
  });
});

describe("noiseCsv with intervals", () => {
  const method = "percentile bootstrap over cells, 1000 replicates";
  type B = [number | null, number | null];
  const ci = (k: number) => ({ mean: [k, k + 1] as B, sd: [k + 2, k + 3] as B, cv: [k + 4, k + 5] as B, fano: [k + 6, k + 7] as B, level: 0.95, method });
  const withCi: SummaryJson = {
    ...summary,
    stationary: { A: { ...summary.stationary.A, ci: ci(100) }, B: { ...summary.stationary.B, ci: { ...ci(200), cv: [null, null] } } },
    final: { A: { ...summary.final.A, ci: ci(300) }, B: { ...summary.final.B, ci: ci(400) } },
  };

  it("noiseCsv(summary) appends each interval's bounds, the level and the method after the older columns", () => {
    const rows = lines(noiseCsv(withCi));
    expect(rows[0]).toBe(
      "species,stationary_mean,stationary_sd,stationary_cv,stationary_fano,final_mean,final_sd,final_cv,final_fano," +
      "period_count,period_mean_min,period_sd_min,period_cv,amplitude_mean,amplitude_sd,burn_in_min,unit," +
      "stationary_mean_lo,stationary_mean_hi,stationary_sd_lo,stationary_sd_hi,stationary_cv_lo,stationary_cv_hi,stationary_fano_lo,stationary_fano_hi," +
      "final_mean_lo,final_mean_hi,final_sd_lo,final_sd_hi,final_cv_lo,final_cv_hi,final_fano_lo,final_fano_hi,ci_level,ci_method");
    expect(rows[1]).toBe("A,2,2,1,2,2.5,0.7,0.28,0.196,0,,,,,,0.4,molecules,100,101,102,103,104,105,106,107,300,301,302,303,304,305,306,307,0.95,\"" + method + "\"");
    expect(rows[2]).toBe("B,11,,,,12,3,0.25,0.75,7,30,3,0.1,5,1,0.4,molecules,200,201,202,203,,,206,207,400,401,402,403,404,405,406,407,0.95,\"" + method + "\"");
  });
});
