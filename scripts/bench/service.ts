// Service benchmark (issue: ensembles as background work): a 1,000-cell ring-timer ensemble
// through the API and worker against the same `cli simulate`, summary read latency, and what a
// run costs in rows and bytes. Run with `npm run bench:service`; prints JSON.
import { spawnSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { performance } from "node:perf_hooks";

import { benchClient, median, startBenchStack } from "./client";

const PORT = Number(process.env.BENCH_PORT ?? 3400);
const base = `http://127.0.0.1:${PORT}`;
const call = benchClient(base);
const CELLS = Number(process.env.BENCH_CELLS ?? 1000);
const T_END = 2000;
const DT = 1;
const SEED = 20261201;



async function main() {
  const { lab, q, stop } = await startBenchStack("burstwise_bench", PORT, call);
  try {
    const circuit = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
    const c = await call("POST", "/api/circuits", { lab_id: lab.id, circuit: { ...circuit, name: "Bench ring timer" } });
    // Warm the worker's thread pool and compiled kernel with a small run first (as a live worker would be).
    const warm = await call("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: 100, dt: 1, runs: 100, seed: 1 });
    while (!["succeeded", "failed"].includes((await call("GET", `/api/runs/${warm.json.id}`)).json.status)) await new Promise((r) => setTimeout(r, 50));
    // The demo seed queues its own ensembles in this database: let them finish so the bench run has the worker alone.
    const quietBy = Date.now() + 10 * 60_000;
    while (Number(q(`select count(*) from runs where status in ('queued', 'running')`)) > 0) {
      if (Date.now() > quietBy) throw new Error("the demo seed's ensembles did not finish within 10 min; nothing was timed");
      await new Promise((r) => setTimeout(r, 200));
    }

    const t0 = performance.now();
    const run = await call("POST", "/api/runs", { version_id: c.json.version_id, method: "ssa", t_end: T_END, dt: DT, runs: CELLS, seed: SEED });
    let status = "";
    while (!["succeeded", "failed", "cancelled"].includes(status)) {
      await new Promise((r) => setTimeout(r, 50));
      status = (await call("GET", `/api/runs/${run.json.id}`)).json.status;
    }
    const apiWallS = (performance.now() - t0) / 1000;
    if (status !== "succeeded") throw new Error(`bench run ${status}`);

    const reads: number[] = [];
    let summaryText = "";
    for (let i = 0; i < 30; i++) {
      const r0 = performance.now();
      summaryText = (await call("GET", `/api/runs/${run.json.id}/summary`)).text;
      reads.push(performance.now() - r0);
    }

    const c0 = performance.now();
    const cli = spawnSync(process.execPath, ["scripts/cli.mjs", "simulate", "examples/ring-timer.circuit.json",
      "--runs", String(CELLS), "--t-end", String(T_END), "--dt", String(DT), "--seed", String(SEED), "--threads", "2"], { encoding: "utf8", maxBuffer: 1 << 30 });
    const cliWallS = (performance.now() - c0) / 1000;
    const cliJson = JSON.parse(cli.stdout);
    const api = JSON.parse(summaryText);
    const keys = ["mean", "sd", "quantiles", "final", "stationary", "period"];
    const identical = keys.every((k) => JSON.stringify(api[k]) === JSON.stringify(cliJson[k]));

    const id = run.json.id;
    const out = {
      cells: CELLS, t_end: T_END, dt: DT, grid_points: Math.floor(T_END / DT) + 1, species: 3,
      api_wall_s: +apiWallS.toFixed(2), cli_wall_s: +cliWallS.toFixed(2), cli_engine_wall_s: +cliJson.wall_s.toFixed(2),
      api_over_cli: +(apiWallS / cliWallS).toFixed(2), identical_statistics: identical,
      summary_read_ms_median: +median(reads).toFixed(1), summary_read_ms_max: +Math.max(...reads).toFixed(1), summary_json_bytes: summaryText.length,
      storage: {
        run_rows: 1,
        chunk_rows: Number(q(`select count(*) from run_chunks where run_id = ${id}`)),
        chunk_partial_bytes: Number(q(`select coalesce(sum(octet_length(partial)),0) from run_chunks where run_id = ${id}`)),
        result_rows: 1,
        summary_gz_bytes: Number(q(`select octet_length(summary_gz) from run_results where run_id = ${id}`)),
        trace_gz_bytes: Number(q(`select octet_length(trace_gz) from run_results where run_id = ${id}`)),
        cells_gz_bytes: Number(q(`select octet_length(cells_gz) from run_results where run_id = ${id}`)),
      },
    };
    console.log(JSON.stringify(out, null, 2));
  } finally {
    await stop();
  }
}

await main();
