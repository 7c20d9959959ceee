import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateCells } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { finalizeSummary } from "@/ssa/stats";
import type { Circuit } from "@/ssa/types";
for (const BASE of [1000, 2000, 3000, 4000, 5000, 6000]) {
    const ring: Circuit = parseCircuit({
      format: "burstwise.circuit/1",
      units: { time: "min", amount: "nM" },
      volume_fL: 30,
      species: [{ id: "A", initial: 0 }, { id: "B", initial: 0 }, { id: "C", initial: 0 }],
      parameters: { v: 40, K: 20, n: 4, g: 0.2 },
      reactions: [
        { id: "make_A", products: { A: 1 }, rate: { law: "hill_repression", input: "C", vmax: "v", K: "K", n: "n" } },
        { id: "make_B", products: { B: 1 }, rate: { law: "hill_activation", input: "A", vmax: "v", K: "K", n: "n" } },
        { id: "make_C", products: { C: 1 }, rate: { law: "hill_activation", input: "B", vmax: "v", K: "K", n: "n" } },
        { id: "lose_A", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
        { id: "lose_B", reactants: { B: 1 }, rate: { law: "mass_action", k: "g" } },
        { id: "lose_C", reactants: { C: 1 }, rate: { law: "mass_action", k: "g" } },
      ],
    });
    const m = compileModel(ring);
    const batches = 8;
    const cellsPerBatch = 6;
    // Batch means (common practice): each batch pools its own cells' samples after burn-in, and
    // the spread of batch statistics gives the standard error without assuming a distribution.
    const stats = (method: "ssa" | "tau") => {
      const cv: number[] = [];
      const mean: number[] = [];
      const period: number[] = [];
      for (let b = 0; b < batches; b++) {
        const o = { method, tEnd: 400, dt: 1, burnIn: 50, seed: BASE + b };
        const p = simulateCells(m, o, 0, cellsPerBatch);
        const s = finalizeSummary(p, { method, seed: o.seed, units: "molecules", species: m.species, times: Array.from({ length: 401 }, (_, g) => g), burnIn: 50, omega: m.omega, timeUnit: "min", amountUnit: "nM", wallS: 0 });
        cv.push(s.stationary.C?.cv as number);
        mean.push(s.stationary.C?.mean as number);
        period.push(s.period.A?.mean as number);
      }
      const avg = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
      const se = (xs: number[]) => Math.sqrt(xs.reduce((a, x) => a + (x - avg(xs)) ** 2, 0) / (xs.length - 1) / xs.length);
      return { cv: [avg(cv), se(cv)], mean: [avg(mean), se(mean)], period: [avg(period), se(period)] };
    };

    const direct = stats("ssa"); const tau = stats("tau");
    console.log(BASE, ["cv", "mean", "period"].map((key) => { const [a, sa] = (direct as any)[key]; const [b, sb] = (tau as any)[key]; return key + " " + ((a - b) / Math.hypot(sa, sb)).toFixed(2); }).join("  "));
}
