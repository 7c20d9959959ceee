// Engine against plain C (issue 13, speed): the direct method's events per second per thread on
// the ring timer at 1 fL (10-min and 1-min grids) and the 1,000-cell ensemble through
// `cli simulate --threads 2` (process start-up included), each beside ssa_ref.c measured in the
// same run, taking turns so that a slow spell of the shared machine hits both.
//
// ssa_ref.c is the C reference of the shared folder beside the repository (../shared/bench/),
// or a copy at scripts/bench/ssa_ref.c, or the file given by --ref FILE. It is built with
// `gcc -O3 -march=native` into a temporary folder. Without the file or gcc the figures of the
// engine are still printed, with "ratio not measured" and the reason.
//
// Usage: node --import tsx scripts/bench/engine.ts [--repeat N] [--ref FILE] [--cells N] [--kernel K] [--out FILE]
//   --cells N   cells of the ensemble (default 1000, the figure; the tests use fewer)
//   --kernel K  direct-method kernel of the events/s figures: wasm, generated or generic (default:
//               the engine's choice, wasm where the circuit allows it); the ensemble uses the default
// Prints JSON.
import { execFileSync, spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { performance } from "node:perf_hooks";
import { fileURLToPath } from "node:url";

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), "../..");
const TARGETS = { grid10: 0.7, grid1: 0.6, ensemble: 1.4 } as const;

function argValue(name: string): string | undefined {
  const k = process.argv.indexOf(name);
  return k >= 0 ? process.argv[k + 1] : undefined;
}

/** Where ssa_ref.c is: --ref FILE alone when given, else ../shared/bench beside the repository, else a copy here. */
function findReference(): string | null {
  const given = argValue("--ref");
  const candidates = given ? [given] : [join(ROOT, "../shared/bench/ssa_ref.c"), join(ROOT, "scripts/bench/ssa_ref.c")];
  for (const c of candidates) if (existsSync(c)) return resolve(c);
  return null;
}

/** Builds ssa_ref; the binary's path, or why there is none. */
function buildReference(dir: string): { binary: string } | { reason: string } {
  const source = findReference();
  if (!source) return { reason: "ssa_ref.c not found, ratio not measured" };
  const binary = join(dir, "ssa_ref");
  const gcc = spawnSync("gcc", ["-O3", "-march=native", "-o", binary, source, "-lm"], { encoding: "utf8" });
  if (gcc.error) return { reason: `gcc not available (${gcc.error.message}), ratio not measured` };
  if (gcc.status !== 0) return { reason: `gcc failed on ${source}: ${gcc.stderr.trim().split("\n")[0]}; ratio not measured` };
  return { binary };
}

interface CResult {
  events: number;
  wall_s: number;
  events_per_s: number;
}

function runC(binary: string, args: string[]): CResult {
  return JSON.parse(execFileSync(binary, args, { encoding: "utf8" })) as CResult;
}

function cli(args: string[]): string {
  return execFileSync(process.execPath, [join(ROOT, "scripts/cli.mjs"), ...args], { cwd: ROOT, encoding: "utf8", maxBuffer: 1 << 28 });
}

/** `cli bench --repeat 3` (best of three, after its warm-up): events/s per thread of the engine's circuits, by name. */
function engineThroughput(kernel: string | undefined): Map<string, number> {
  const out = JSON.parse(cli(["bench", "--repeat", "3", ...(kernel ? ["--kernel", kernel] : [])])) as { circuits: { circuit: string; events_per_s_per_thread: number }[] };
  return new Map(out.circuits.map((c) => [c.circuit, c.events_per_s_per_thread]));
}

/** Elapsed time and peak RSS of one `cli simulate` process (start-up included). */
function engineEnsemble(dir: string, cells: number): { elapsed_s: number; peak_rss_mb: number | null; wall_s: number; events: number } {
  const out = join(dir, "ensemble.json");
  const args = [join(ROOT, "scripts/cli.mjs"), "simulate", join(ROOT, "examples/ring-timer.circuit.json"), "--runs", String(cells), "--t-end", "2000", "--dt", "1", "--threads", "2", "--seed", "7", "--out", out];
  // GNU time reports the child's peak RSS; without it only the elapsed time is measured.
  const useTime = existsSync("/usr/bin/time");
  const t0 = performance.now();
  const r = useTime
    ? spawnSync("/usr/bin/time", ["-f", "%M", process.execPath, ...args], { cwd: ROOT, encoding: "utf8" })
    : spawnSync(process.execPath, args, { cwd: ROOT, encoding: "utf8" });
  const elapsed = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`cli simulate failed: ${r.stderr}`);
  const rss = useTime ? Number(r.stderr.trim().split("\n").pop()) / 1024 : null;
  const s = JSON.parse(readFileSync(out, "utf8")) as { wall_s: number; events: number };
  return { elapsed_s: elapsed, peak_rss_mb: rss !== null && Number.isFinite(rss) ? rss : null, wall_s: s.wall_s, events: s.events };
}

function main(): void {
  const repeat = Number(argValue("--repeat") ?? 3);
  if (!Number.isInteger(repeat) || repeat < 1 || repeat > 20) throw new Error("--repeat: must be an integer from 1 to 20");
  const cells = Number(argValue("--cells") ?? 1000);
  const kernel = argValue("--kernel");
  if (kernel !== undefined && !["wasm", "generated", "generic"].includes(kernel)) throw new Error("--kernel: must be wasm, generated or generic");
  if (!Number.isInteger(cells) || cells < 1) throw new Error("--cells: must be a positive integer");
  const dir = mkdtempSync(join(tmpdir(), "burstwise-bench-"));
  try {
    const ref = buildReference(dir);
    const c = "binary" in ref ? ref.binary : null;
    const best = { js10: 0, js1: 0, c10: 0, c1: 0, jsEnsemble: Infinity, cEnsemble: Infinity };
    let ensemble: ReturnType<typeof engineEnsemble> | null = null;
    let cEnsembleRun: CResult | null = null;
    for (let r = 0; r < repeat; r++) {
      const js = engineThroughput(kernel);
      best.js10 = Math.max(best.js10, js.get("ring timer, 1 fL") ?? 0);
      best.js1 = Math.max(best.js1, js.get("ring timer, 1 fL, 1-min grid") ?? 0);
      if (c) {
        best.c10 = Math.max(best.c10, runC(c, ["ring1", "--runs", "10", "--t-end", "20000", "--dt", "10", "--seed", String(1 + r)]).events_per_s);
        best.c1 = Math.max(best.c1, runC(c, ["ring1", "--runs", "10", "--t-end", "20000", "--dt", "1", "--seed", String(1 + r)]).events_per_s);
      }
      const e = engineEnsemble(dir, cells);
      if (e.elapsed_s < best.jsEnsemble) {
        best.jsEnsemble = e.elapsed_s;
        ensemble = e;
      }
      if (c) {
        const ce = runC(c, ["ring1", "--runs", String(cells), "--t-end", "2000", "--dt", "1", "--seed", "7"]);
        if (ce.wall_s < best.cEnsemble) {
          best.cEnsemble = ce.wall_s;
          cEnsembleRun = ce;
        }
      }
    }
    const ratio = (a: number, b: number) => (c ? a / b : null);
    const result = {
      reference: c ? { source: findReference(), build: "gcc -O3 -march=native" } : { note: (ref as { reason: string }).reason },
      repeats: repeat,
      kernel: kernel ?? "default",
      direct_method_events_per_s_per_thread: {
        grid_10_min: { engine: best.js10, c: c ? best.c10 : null, ratio: ratio(best.js10, best.c10), target: `>= ${TARGETS.grid10}` },
        grid_1_min: { engine: best.js1, c: c ? best.c1 : null, ratio: ratio(best.js1, best.c1), target: `>= ${TARGETS.grid1}` },
      },
      ensemble: {
        command: `cli simulate examples/ring-timer.circuit.json --runs ${cells} --t-end 2000 --dt 1 --threads 2`,
        engine_elapsed_s: best.jsEnsemble,
        engine_wall_s: ensemble?.wall_s,
        engine_peak_rss_mb: ensemble?.peak_rss_mb,
        events: ensemble?.events,
        c_single_thread_s: c ? best.cEnsemble : null,
        c_events: cEnsembleRun?.events ?? null,
        // The target compares with C's single-thread time split over the two threads.
        ratio_to_c_half: c ? best.jsEnsemble / (best.cEnsemble / 2) : null,
        target: `<= ${TARGETS.ensemble}`,
      },
      note: c ? undefined : (ref as { reason: string }).reason,
    };
    const text = JSON.stringify(result, null, 2) + "\n";
    const outFile = argValue("--out");
    if (outFile) writeFileSync(outFile, text);
    else process.stdout.write(text);
    if (!c) process.stderr.write(`${(ref as { reason: string }).reason}\n`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

main();
