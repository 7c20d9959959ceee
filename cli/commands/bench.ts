/**
 * `bench`: throughput of the stochastic engine on the shipped benchmark circuits, in reaction events
 * per second per thread (CONTRACT.md §2), plus optional ensemble, tau-leaping and generator figures.
 */
import { existsSync, readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { performance } from "node:perf_hooks";
import { Worker } from "node:worker_threads";

import { noFormulas, parseCircuitWith } from "@/lib/schemas/circuit-rules";
import { ENGINE_KERNELS, simulateCells, summarize, type EngineKernel } from "@/ssa/ensemble";
import type { Partial } from "@/ssa/stats";
import { compileParsedModel } from "@/ssa/model-core";
import { runSimulation } from "@/ssa/node/run-lazy";
import type { Circuit } from "@/ssa/types";

import { CliError, numberFlag, parseFlags, writeJson, type Command } from "../common";

const BENCH_CIRCUITS = [
  { name: "ring timer, 1 fL", file: "ring-timer.circuit.json", tEnd: 20000, dt: 10, cells: 10 },
  // The same cells sampled every minute: the grid's share of the cost (issue 13's second figure).
  { name: "ring timer, 1 fL, 1-min grid", file: "ring-timer.circuit.json", tEnd: 20000, dt: 1, cells: 10 },
  { name: "ring timer, 10 fL", file: "ring-timer-10fL.circuit.json", tEnd: 2000, dt: 10, cells: 10 },
  { name: "two-stage reporter", file: "two-stage-reporter.circuit.json", tEnd: 2000, dt: 10, cells: 60 },
];

/** The project's examples/ folder: up from this file (cli/commands/, or the engine bundle in .cache/) to the folder that holds it. */
function examplesDir(): URL {
  for (let dir = new URL("./", import.meta.url); dir.pathname !== "/"; dir = new URL("../", dir)) {
    if (existsSync(new URL("examples/ring-timer.circuit.json", dir))) return new URL("examples/", dir);
  }
  throw new CliError("bench: cannot find the examples folder", 1);
}

function loadExample(file: string): Circuit {
  // The benchmark circuits have no formulas, so the formula parser is never loaded.
  return parseCircuitWith(JSON.parse(readFileSync(new URL(file, examplesDir()), "utf8")), noFormulas);
}

function compileModel(c: Circuit) {
  return compileParsedModel(c, undefined, c.reactions.map(() => null));
}

interface Timing {
  events: number;
  wallS: number;
  /** Process CPU time (user + system): on a shared machine it counts only the time we ran. */
  cpuS: number;
}

function timeCells(circuit: Circuit, method: "ssa" | "tau", tEnd: number, dt: number, cells: number, seed: number, kernel?: EngineKernel): Timing {
  const model = compileModel(circuit);
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const p = simulateCells(model, { method, tEnd, dt, seed, kernel }, 0, cells);
  const wallS = (performance.now() - t0) / 1000;
  const c = process.cpuUsage(c0);
  return { events: p.events, wallS, cpuS: (c.user + c.system) / 1e6 };
}

function median(xs: number[]): number {
  const s = xs.slice().sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? (s[m] as number) : ((s[m - 1] as number) + (s[m] as number)) / 2;
}

function throughput(repeat: number, kernel?: EngineKernel) {
  return BENCH_CIRCUITS.map((b) => {
    const circuit = loadExample(b.file);
    timeCells(circuit, "ssa", b.tEnd / 10, b.dt, 1, 999, kernel); // warm-up: compile and optimise the kernel
    const rates: number[] = [];
    const cpuRates: number[] = [];
    let events = 0;
    for (let r = 0; r < repeat; r++) {
      const t = timeCells(circuit, "ssa", b.tEnd, b.dt, b.cells, 1 + r, kernel);
      rates.push(t.events / t.wallS);
      cpuRates.push(t.events / t.cpuS);
      events = t.events;
    }
    return {
      circuit: b.name,
      file: `examples/${b.file}`,
      method: "ssa",
      kernel: kernel ?? "default",
      cells: b.cells,
      t_end: b.tEnd,
      dt: b.dt,
      events_per_run: events,
      events_per_s_per_thread: Math.max(...rates),
      events_per_s_per_thread_median: median(rates),
      events_per_cpu_s: Math.max(...cpuRates),
      events_per_cpu_s_median: median(cpuRates),
      repeats: repeat,
    };
  });
}

async function ensemble(threads: number) {
  const circuit = loadExample("ring-timer.circuit.json");
  const t0 = performance.now();
  const s = await runSimulation(circuit, { method: "ssa", tEnd: 2000, dt: 1, runs: 1000, seed: 7, threads });
  return {
    circuit: "ring timer, 1 fL",
    runs: 1000,
    t_end: 2000,
    dt: 1,
    threads,
    wall_s: (performance.now() - t0) / 1000,
    events: s.events,
    peak_rss_mb: process.resourceUsage().maxRSS / 1024,
  };
}

/** Pooled CV after burn-in of each species, with a jackknife-over-cells standard error (Efron 1982). */
function cvWithError(p: Partial): { cv: number; se: number }[] {
  const seg = p.segments[0];
  if (!seg || p.segments.length !== 1) throw new Error("expected one segment");
  return seg.species.map((sp) => {
    const sums = sp.sum as Float64Array;
    const sumSqs = sp.sumSq as Float64Array;
    const n = sums.length;
    const per = p.cellSamples as number;
    const cv = (s: number, q: number, count: number) => {
      const mean = s / count;
      return Math.sqrt(q / count - mean * mean) / mean;
    };
    let S = 0;
    let Q = 0;
    for (let k = 0; k < n; k++) {
      S += sums[k] as number;
      Q += sumSqs[k] as number;
    }
    const leaveOut = Array.from({ length: n }, (_, k) => cv(S - (sums[k] as number), Q - (sumSqs[k] as number), (n - 1) * per));
    const avg = leaveOut.reduce((x, y) => x + y, 0) / n;
    const se = Math.sqrt(((n - 1) / n) * leaveOut.reduce((x, y) => x + (y - avg) ** 2, 0));
    return { cv: cv(S, Q, n * per), se };
  });
}

/**
 * Tau-leaping against the direct method on the same cells (ring timer at `volumeFL`), for each ε:
 * CPU time, speed-up, and the stationary CV of each species with its difference in percent and in
 * standard errors; the mean period and period CV of A as a second, more sensitive measure.
 */
function tauVersusDirect(volumeFL: number, cells: number, tEnd: number, epsilons: number[], repeats: number) {
  const base = loadExample("ring-timer.circuit.json");
  const circuit: Circuit = { ...base, volume_fL: volumeFL, name: `${base.name ?? "ring timer"} (${volumeFL} fL)` };
  // One model (hence one compiled kernel) per configuration; each is warmed up once (V8 compiles the
  // generated kernel and settles its optimisations), then the configurations take turns `repeats`
  // times so that a slow spell of the shared machine hits all of them, and each keeps its best time.
  const settings: { method: "ssa" | "tau"; tauEpsilon?: number }[] = [{ method: "ssa" }, ...epsilons.map((tauEpsilon) => ({ method: "tau" as const, tauEpsilon }))];
  const configs = settings.map((c) => ({
    o: { ...c, tEnd, dt: 1, seed: 11, burnIn: 100 },
    model: compileModel(circuit),
    wallS: Infinity,
    cpuS: Infinity,
    p: null as Partial | null,
  }));
  for (const c of configs) simulateCells(c.model, c.o, 0, 8);
  for (let r = 0; r < repeats; r++) {
    for (const c of configs) {
      const c0 = process.cpuUsage();
      const t0 = performance.now();
      c.p = simulateCells(c.model, c.o, 0, cells);
      c.wallS = Math.min(c.wallS, (performance.now() - t0) / 1000);
      const used = process.cpuUsage(c0);
      c.cpuS = Math.min(c.cpuS, (used.user + used.system) / 1e6);
    }
  }
  const describe = (c: (typeof configs)[number]) => {
    const p = c.p as Partial;
    const s = summarize(c.model, c.o, p);
    const cvs = cvWithError(p);
    return {
      cpu_s: c.cpuS,
      wall_s: c.wallS,
      events: p.events,
      stationary_cv: Object.fromEntries(c.model.species.map((id, i) => [id, cvs[i]?.cv])),
      period_A: { mean: s.period.A?.mean, cv: s.period.A?.cv },
    };
  };
  const [direct, ...taus] = configs as [(typeof configs)[number], ...(typeof configs)[number][]];
  const directCv = cvWithError(direct.p as Partial);
  const species = direct.model.species;
  return {
    circuit: `ring timer, ${volumeFL} fL`,
    cells,
    t_end: tEnd,
    dt: 1,
    burn_in: 100,
    repeats,
    direct: describe(direct),
    tau: taus.map((c) => {
      const tauCv = cvWithError(c.p as Partial);
      return {
        epsilon: c.o.tauEpsilon,
        ...describe(c),
        speedup_cpu: direct.cpuS / c.cpuS,
        speedup_wall: direct.wallS / c.wallS,
        cv_difference_percent: Object.fromEntries(species.map((id, i) => [id, 100 * ((tauCv[i]?.cv as number) / (directCv[i]?.cv as number) - 1)])),
        cv_difference_z: Object.fromEntries(
          species.map((id, i) => [id, ((tauCv[i]?.cv as number) - (directCv[i]?.cv as number)) / Math.hypot(tauCv[i]?.se as number, directCv[i]?.se as number)]),
        ),
      };
    }),
  };
}

/**
 * Uniforms per second of each seedrandom generator through its `prng()`, each measured in a fresh
 * worker thread so that the call site stays monomorphic (one shared loop would favour whichever
 * generator V8 saw first).
 */
async function generators(n: number) {
  const names = ["alea", "xor128", "xorwow", "xorshift7", "xor4096", "tychei", "arc4"] as const;
  const out: { generator: string; uniforms_per_s: number; seed_us: number }[] = [];
  for (const name of names) {
    const code = `
      const { parentPort, workerData } = require("node:worker_threads");
      const seedrandom = require(workerData.lib);
      const make = (s) => (workerData.name === "arc4" ? seedrandom(s) : seedrandom[workerData.name](s));
      const g = make("bench:1");
      let acc = 0;
      for (let k = 0; k < 1e6; k++) acc += g();
      let best = 0;
      for (let rep = 0; rep < 3; rep++) {
        const t0 = performance.now();
        for (let k = 0; k < workerData.n; k++) acc += g();
        best = Math.max(best, workerData.n / ((performance.now() - t0) / 1000));
      }
      const s0 = performance.now();
      for (let k = 0; k < 10000; k++) make("bench:" + k)();
      parentPort.postMessage({ uniforms_per_s: best, seed_us: ((performance.now() - s0) / 10000) * 1000, acc: acc > 0 });
    `;
    const lib = createRequire(import.meta.url).resolve("seedrandom");
    const r = await new Promise<{ uniforms_per_s: number; seed_us: number }>((resolve, reject) => {
      const w = new Worker(code, { eval: true, workerData: { name, n, lib } });
      w.once("message", (m) => {
        resolve(m);
        void w.terminate();
      });
      w.once("error", reject);
    });
    out.push({ generator: name, uniforms_per_s: r.uniforms_per_s, seed_us: r.seed_us });
  }
  return out;
}

export const command: Command = {
  summary: "engine throughput on the shipped benchmark circuits, in events per second per thread",
  help: `Usage: bench [options]

Runs the direct method on the shipped benchmark circuits (ring timer at 1 fL sampled every 10
minutes and every minute, at 10 fL every 10 minutes, and the two-stage reporter) on one thread and prints reaction events per second
per thread as JSON (best and median of --repeat runs).

Options:
  --repeat N     runs per circuit (default 5; each is 5-6 million events)
  --kernel K     direct-method kernel of the circuits: wasm, generated or generic (default: wasm
                 where the circuit allows it, else generated; all give the same samples)
  --ensemble     also time 1,000 cells of the ring timer for 2,000 min at dt 1 (wall time, peak RSS)
  --threads K    threads for --ensemble (default 2)
  --tau          also compare tau-leaping (ε = 0.03, 0.05, 0.07, 0.1) with the direct method on
                 64 cells of the ring timer at 100 fL for 600 min: time (best of --repeat, at
                 most 3), speed-up, stationary CVs and their differences
  --rng          also measure the seeded generators of seedrandom (uniforms per second)
  --all          all of the above
  --out FILE     write the JSON there instead of stdout`,
  async run(argv) {
    const flags = parseFlags(argv, { repeat: "string", ensemble: "boolean", tau: "boolean", rng: "boolean", all: "boolean", threads: "string", out: "string", kernel: "string" }, "bench");
    const kernelFlag = flags.values.kernel as string | undefined;
    if (kernelFlag !== undefined && !(ENGINE_KERNELS as readonly string[]).includes(kernelFlag)) throw new CliError(`--kernel: must be one of ${ENGINE_KERNELS.join(", ")}, got ${kernelFlag}`);
    const kernel = kernelFlag as EngineKernel | undefined;
    const repeat = numberFlag(flags, "repeat") ?? 5;
    if (!Number.isInteger(repeat) || repeat < 1 || repeat > 100) throw new CliError("--repeat: must be an integer from 1 to 100");
    const threads = numberFlag(flags, "threads") ?? 2;
    if (!Number.isInteger(threads) || threads < 1 || threads > 256) throw new CliError("--threads: must be an integer from 1 to 256");
    const all = flags.values.all === true;
    const result: Record<string, unknown> = { unit: "reaction events per second per thread", node: process.version, circuits: throughput(repeat, kernel) };
    if (all || flags.values.tau) result.tau = tauVersusDirect(100, 64, 600, [0.03, 0.05, 0.07, 0.1], Math.min(repeat, 3));
    if (all || flags.values.rng) result.generators = await generators(5e7);
    if (all || flags.values.ensemble) result.ensemble = await ensemble(threads);
    writeJson(result, flags.values.out as string | undefined);
  },
};
