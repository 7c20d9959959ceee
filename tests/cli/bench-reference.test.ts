// scripts/bench/engine.ts: the engine beside the C reference, and what it says without one.
import { spawn, spawnSync } from "node:child_process";
import { existsSync } from "node:fs";

import { describe, expect, it } from "vitest";

function bench(...args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const p = spawn(process.execPath, ["--import", "tsx", "scripts/bench/engine.ts", "--repeat", "1", "--cells", "20", ...args], { stdio: ["ignore", "pipe", "pipe"] });
    let stdout = "";
    let stderr = "";
    p.stdout.on("data", (d) => (stdout += d));
    p.stderr.on("data", (d) => (stderr += d));
    p.on("close", (code) => resolve({ code, stdout, stderr }));
  });
}

const SHARED_REF = "../shared/bench/ssa_ref.c";
const hasGcc = !spawnSync("gcc", ["--version"]).error;

describe("engine benchmark against ssa_ref.c", () => {
  it("without ssa_ref.c it still measures the engine and says the ratio was not measured (exit 0)", async () => {
    const r = await bench("--ref", "/nonexistent/ssa_ref.c");
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.note).toBe("ssa_ref.c not found, ratio not measured");
    expect(r.stderr).toContain("ssa_ref.c not found, ratio not measured");
    expect(j.direct_method_events_per_s_per_thread.grid_10_min.engine).toBeGreaterThan(1e5);
    expect(j.direct_method_events_per_s_per_thread.grid_1_min.engine).toBeGreaterThan(1e5);
    expect(j.direct_method_events_per_s_per_thread.grid_10_min.ratio).toBeNull();
    expect(j.ensemble.engine_elapsed_s).toBeGreaterThan(0);
    expect(j.ensemble.ratio_to_c_half).toBeNull();
  });

  it("--kernel takes wasm, generated or generic and refuses anything else, naming the flag", async () => {
    const r = await bench("--kernel", "fastest");
    expect(r.code).not.toBe(0);
    expect(r.stderr).toContain("--kernel: must be wasm, generated or generic");
    const c = spawnSync(process.execPath, ["scripts/cli.mjs", "bench", "--repeat", "1", "--kernel", "fastest"], { encoding: "utf8" });
    expect(c.status).not.toBe(0);
    expect(c.stderr).toContain("--kernel: must be one of wasm, generated, generic");
  });

  it.skipIf(!existsSync(SHARED_REF) || !hasGcc)("with ../shared/bench/ssa_ref.c and gcc it prints the ratios of the same run", async () => {
    const r = await bench();
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.note).toBeUndefined();
    const g = j.direct_method_events_per_s_per_thread.grid_10_min;
    expect(g.c).toBeGreaterThan(1e5);
    expect(g.ratio).toBeCloseTo(g.engine / g.c, 12);
    expect(j.ensemble.c_single_thread_s).toBeGreaterThan(0);
    expect(j.ensemble.ratio_to_c_half).toBeCloseTo(j.ensemble.engine_elapsed_s / (j.ensemble.c_single_thread_s / 2), 12);
  });
});
