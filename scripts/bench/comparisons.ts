// Comparison benchmark (issue: compare designs): a 5-design sweep of the ring timer, 1,000 cells
// each, through the API and the worker (launch → every ensemble → noise table with bootstrap
// intervals), against the same five ensembles run one after another through `cli simulate`.
// Target: the sweep within 1.3× of the five CLI runs. Also checks that every design's statistics
// equal the CLI's for the same seed, and measures the stored per-cell statistics.
// Run with `npm run bench:comparisons` (BENCH_REPEATS=3 for several rounds); prints JSON.
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { performance } from "node:perf_hooks";

import { benchClient, median, startBenchStack } from "./client";

const PORT = Number(process.env.BENCH_PORT ?? 3410);
const base = `http://127.0.0.1:${PORT}`;
const call = benchClient(base);
const CELLS = Number(process.env.BENCH_CELLS ?? 1000);
const REPEATS = Number(process.env.BENCH_REPEATS ?? 1);
const T_END = 2000;
const DT = 1;
const G_VALUES = { parameter: "g", scale: "log" as const, from: 0.15, to: 0.3, points: 5 };


const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const STATS = ["mean", "sd", "quantiles", "final", "stationary", "period"];

async function main() {
  const { lab, q, stop } = await startBenchStack("burstwise_bench_cmp", PORT, call);
  try {
    // The seeded demo comparison runs first: it warms the worker's threads, and the timed sweep starts on an idle queue.
    const d0 = performance.now();
    while (Number(q("select count(*) from runs where status in ('queued','running')")) > 0) await sleep(250);
    const demoS = (performance.now() - d0) / 1000;
    const circuit = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
    const c = await call("POST", "/api/circuits", { lab_id: lab.id, circuit: { ...circuit, name: "Bench ring timer" } });

    const rounds = [];
    for (let round = 0; round < REPEATS; round++) {
      const seed = 20261220 + 100 * round;
      const t0 = performance.now();
      const created = await call("POST", "/api/comparisons", {
        lab_id: lab.id, name: `Bench sweep ${round + 1}`, launch: true,
        sweep: { version_id: c.json.version_id, axes: [G_VALUES] }, settings: { method: "ssa", t_end: T_END, dt: DT, runs: CELLS, seed },
      });
      if (created.status !== 201) throw new Error(`bench comparison: ${created.status} ${created.text}`);
      let cmp;
      for (;;) {
        await sleep(100);
        cmp = (await call("GET", `/api/comparisons/${created.json.id}`)).json;
        if (["succeeded", "failed", "cancelled"].includes(cmp.status)) break;
      }
      const apiWallS = (performance.now() - t0) / 1000;
      if (cmp.status !== "succeeded") throw new Error(`bench comparison ${cmp.status}: ${cmp.error}`);

      const cliS: number[] = [];
      let identical = true;
      for (const d of cmp.designs) {
        const c0 = performance.now();
        const cli = spawnSync(process.execPath, ["scripts/cli.mjs", "simulate", "examples/ring-timer.circuit.json",
          "--set", `g=${d.values.g}`, "--runs", String(CELLS), "--t-end", String(T_END), "--dt", String(DT), "--seed", String(d.run.seed), "--threads", "2"],
        { encoding: "utf8", maxBuffer: 1 << 30 });
        cliS.push((performance.now() - c0) / 1000);
        if (cli.status !== 0) throw new Error(`cli: ${cli.stderr}`);
        const api = JSON.parse((await call("GET", `/api/runs/${d.run.id}/summary`)).text);
        const mine = JSON.parse(cli.stdout);
        identical &&= STATS.every((k) => JSON.stringify(api[k]) === JSON.stringify(mine[k]));
      }
      const cliTotalS = cliS.reduce((a, b) => a + b, 0);
      const id = created.json.id;
      const runIds = cmp.designs.map((d: { run: { id: string } }) => d.run.id).join(",");
      const resultsS = Number(q(`select extract(epoch from c.finished_at - (select max(finished_at) from runs where id in (${runIds}))) from comparisons c where c.id = ${id}`));
      rounds.push({
        api_wall_s: +apiWallS.toFixed(2), cli_total_s: +cliTotalS.toFixed(2), cli_each_s: cliS.map((s) => +s.toFixed(2)),
        api_over_cli: +(apiWallS / cliTotalS).toFixed(3), identical_statistics: identical,
        results_after_last_run_s: +resultsS.toFixed(2),
        cell_stats_gz_bytes: q(`select string_agg(octet_length(cell_stats_gz)::text, ',' order by run_id) from run_results where run_id in (${runIds})`).split(",").map(Number),
      });
      console.error(`[bench] round ${round + 1}: API ${apiWallS.toFixed(1)} s, CLI ${cliTotalS.toFixed(1)} s, ratio ${(apiWallS / cliTotalS).toFixed(2)}`);
    }
    const ratios = rounds.map((r) => r.api_over_cli);
    console.log(JSON.stringify({
      designs: 5, cells_per_design: CELLS, t_end: T_END, dt: DT, sweep: G_VALUES, worker_concurrency: 2, cli_threads: 2,
      demo_comparison_s: +demoS.toFixed(1),
      cell_stats_raw_bytes: 8 * (4 + 5 * 3 * CELLS),
      ratio_best: Math.min(...ratios), ratio_median: median(ratios), target: 1.3,
      rounds,
    }, null, 2));
  } finally {
    await stop();
  }
}

await main();
