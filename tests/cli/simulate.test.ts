/**
 * The command line as scripts use it (CONTRACT.md §2): real child processes, JSON on stdout or
 * --out, one-line errors on stderr with exit 2 for bad input.
 */
import { spawn } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** `node scripts/cli.mjs …`, what `npm run --silent cli --` runs. */
function cli(...args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    const p = spawn(process.execPath, ["scripts/cli.mjs", ...args], { stdio: ["ignore", "pipe", "pipe"] });
    let stdout = "";
    let stderr = "";
    p.stdout.on("data", (d) => (stdout += d));
    p.stderr.on("data", (d) => (stderr += d));
    p.on("close", (code) => resolve({ code, stdout, stderr }));
  });
}

const dir = mkdtempSync(join(tmpdir(), "bw-sim-"));
const STATS = ["times", "mean", "sd", "quantiles", "final", "stationary", "period"] as const;
const statsBytes = (json: Record<string, unknown>) => JSON.stringify(STATS.map((k) => json[k]));

describe("cli simulate and trajectory", () => {
  it("simulate --seed gives the CONTRACT.md JSON, byte-identical statistics for --threads 1 and 2", async () => {
    const args = ["simulate", "examples/ring-timer.circuit.json", "--t-end", "200", "--dt", "1", "--runs", "60", "--seed", "42"];
    const [one, two] = await Promise.all([cli(...args, "--threads", "1"), cli(...args, "--threads", "2", "--out", join(dir, "two.json"))]);
    expect(one.code).toBe(0);
    expect(two.code).toBe(0);
    expect(two.stdout).toBe("");
    const a = JSON.parse(one.stdout);
    const b = JSON.parse(readFileSync(join(dir, "two.json"), "utf8"));
    for (const key of ["method", "seed", "runs", "units", "species", ...STATS, "events", "wall_s", "events_per_s"]) expect(a).toHaveProperty(key);
    expect(a).toMatchObject({ method: "ssa", seed: 42, runs: 60, units: "molecules", species: ["A", "B", "C"] });
    expect(a.times).toHaveLength(201);
    expect(Object.keys(a.quantiles.A)).toEqual(["p05", "p25", "p50", "p75", "p95"]);
    // The older four numbers first, then their 95% interval over cells beside them (issue 12).
    expect(Object.keys(a.final.A)).toEqual(["mean", "variance", "cv", "fano", "ci"]);
    expect(Object.keys(a.stationary.A.ci)).toEqual(["mean", "sd", "cv", "fano", "level", "method"]);
    expect(a.warnings).toEqual(expect.any(Array));
    expect(a.period.A).toMatchObject({ count: expect.any(Number), histogram: { edges: expect.any(Array), counts: expect.any(Array) } });
    expect(statsBytes(b)).toBe(statsBytes(a));
    expect(b.events).toBe(a.events);
  });

  it("simulate without --seed prints the seed it drew, and that seed reproduces the run", async () => {
    const args = ["simulate", "examples/birth-death.circuit.json", "--t-end", "50", "--runs", "20", "--threads", "1"];
    const first = JSON.parse((await cli(...args)).stdout);
    expect(Number.isSafeInteger(first.seed)).toBe(true);
    const again = JSON.parse((await cli(...args, "--seed", String(first.seed))).stdout);
    expect(statsBytes(again)).toBe(statsBytes(first));
    expect(first.times).toHaveLength(101); // --dt defaults to T/100
  });

  it("trajectory --seed S --index I prints cell I's path; simulate --method ode prints the trace", async () => {
    const [t, ode] = await Promise.all([
      cli("trajectory", "examples/ring-timer.circuit.json", "--seed", "42", "--index", "7", "--t-end", "100", "--dt", "5"),
      cli("simulate", "examples/ring-timer.circuit.json", "--method", "ode", "--t-end", "100", "--dt", "5"),
    ]);
    expect(t.code).toBe(0);
    const tj = JSON.parse(t.stdout);
    expect(tj).toMatchObject({ seed: 42, index: 7, units: "molecules", species: ["A", "B", "C"] });
    expect(tj.times).toHaveLength(21);
    expect(tj.values.C).toHaveLength(21);
    expect(tj.events).toBeGreaterThan(0);
    expect(ode.code).toBe(0);
    const o = JSON.parse(ode.stdout);
    expect(o).toMatchObject({ method: "ode", runs: 1, units: "model" });
    expect(o.trace.A).toEqual(o.mean.A);
    expect(o.sd.B.every((v: number) => v === 0)).toBe(true);
  });

  it("bad input exits 2 with one line naming the field", async () => {
    const bad = join(dir, "bad.circuit.json");
    const c = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
    c.reactions[3].rate.k = "Kc";
    writeFileSync(bad, JSON.stringify(c));
    const notJson = join(dir, "broken.json");
    writeFileSync(notJson, "{ not json");
    const ring = "examples/ring-timer.circuit.json";
    const cases: [string[], RegExp][] = [
      [["simulate", bad, "--t-end", "10"], /^reactions\[3\]\.rate\.k: unknown parameter "Kc"\n$/],
      [["simulate", ring], /^--t-end: is required\n$/],
      [["simulate", ring, "--t-end", "10", "--runs", "0"], /^--runs: must be >= 1\n$/],
      [["simulate", ring, "--t-end", "10", "--set", "Kc=1"], /^--set Kc: unknown parameter "Kc"\n$/],
      [["simulate", ring, "--t-end", "10", "--set", "n=-4"], /^reactions\[0\]\.rate\.n: must be > 0/],
      [["simulate", ring, "--t-end", "10", "--method", "euler"], /^--method: must be "ode", "ssa" or "tau"\n$/],
      [["simulate", ring, "--t-end", "10", "--dt", "20"], /^--dt: must be <= tEnd \(10\)\n$/],
      [["simulate", ring, "--t-end", "10", "--method", "tau", "--tau-epsilon", "0.5"], /^--tau-epsilon: must be at most 0.2\n$/],
      [["simulate", ring, "--t-end", "10", "--method", "tau", "--tau-epsilon", "0"], /^--tau-epsilon: must be > 0\n$/],
      [["simulate", ring, "--t-end", "10", "--tau-epsilon", "0.05"], /^--tau-epsilon: applies only to method "tau"\n$/],
      [["simulate", ring, "--t-end", "10", "--colour", "red"], /^--colour: unknown option/],
      [["simulate", notJson, "--t-end", "10"], /broken\.json: not valid JSON/],
      [["simulate", join(dir, "absent.json"), "--t-end", "10"], /absent\.json: no such file\n$/],
      [["trajectory", ring, "--t-end", "10", "--index", "3"], /^--seed: is required\n$/],
      [["trajectory", ring, "--t-end", "10", "--seed", "1", "--index", "-2"], /^--index: must be a non-negative integer\n$/],
      [["frobnicate"], /^frobnicate: unknown command/],
    ];
    const runs = await Promise.all(cases.map(([args]) => cli(...args)));
    runs.forEach((r, k) => {
      expect(r.code, cases[k]?.[0].join(" ")).toBe(2);
      expect(r.stderr).toMatch(cases[k]?.[1] as RegExp);
      expect(r.stderr.trim().split("\n")).toHaveLength(1);
      expect(r.stdout).toBe("");
    });
  });

  it("bench prints events per second per thread for the shipped benchmark circuits (the ring timer on two grids)", async () => {
    const r = await cli("bench", "--repeat", "1");
    expect(r.code).toBe(0);
    const b = JSON.parse(r.stdout);
    expect(b.unit).toBe("reaction events per second per thread");
    expect(b.circuits.map((c: { circuit: string }) => c.circuit)).toEqual(["ring timer, 1 fL", "ring timer, 1 fL, 1-min grid", "ring timer, 10 fL", "two-stage reporter"]);
    for (const c of b.circuits) expect(c.events_per_s_per_thread).toBeGreaterThan(1e5);
  });

  it("--help prints usage and exits 0 for every command", async () => {
    const runs = await Promise.all(["simulate", "trajectory", "bench"].map((c) => cli(c, "--help")));
    for (const r of runs) {
      expect(r.code).toBe(0);
      expect(r.stdout).toMatch(/^Usage: /);
    }
  });
});
