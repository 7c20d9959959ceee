import { readFileSync } from "node:fs";
import { noFormulas, parseCircuitWith } from "@/lib/schemas/circuit-rules";
import { compileParsedModel } from "@/ssa/model-core";
import { simulateCells } from "@/ssa/ensemble";
const dt = Number(process.argv[2] ?? 10);
const c = parseCircuitWith(JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8")), noFormulas);
const m = compileParsedModel(c, undefined, c.reactions.map(() => null));
simulateCells(m, { method: "ssa", tEnd: 2000, dt, seed: 999 }, 0, 1);
let best = 0;
for (let r = 0; r < 5; r++) {
  const c0 = process.cpuUsage();
  const p = simulateCells(m, { method: "ssa", tEnd: 20000, dt, seed: 1 + r }, 0, 10);
  const cu = process.cpuUsage(c0); best = Math.max(best, p.events / ((cu.user + cu.system) / 1e6));
}
console.log("dt", dt, (best / 1e6).toFixed(1), "M/cpu-s");
