/**
 * State-triggered changes of a schedule (`{ "when": …, "delay"?, "set": … }`), checked against
 * closed forms of first-passage times, with fixed seeds and z-scores over cells:
 *
 * - Pure birth at rate k from 0: the time the count first reaches N is the N-th arrival of a
 *   Poisson process, Erlang(N, k): mean N/k, variance N/k², excess kurtosis 6/N (a textbook fact
 *   of Poisson processes; e.g. Ross, Introduction to Probability Models, §5.3; from memory). A
 *   trigger "X >= N" that switches the birth off with no delay leaves every cell at exactly N; with
 *   a delay d, the cell makes Poisson(k·d) more molecules before the switch lands.
 * - Pure death at rate g per molecule from n0: the time to fall from n0 to m is the sum of
 *   independent exponentials of rates g·j, j = m+1..n0: mean Σ 1/(g·j), variance Σ 1/(g·j)²
 *   (the same source).
 * - The mean field of birth and loss, dX/dt = k − g·X from 0, reaches N at t* = −ln(1 − gN/k)/g,
 *   and decays as N·e^(−g(t − t*)) once the birth is switched off (closed form of a linear ODE).
 */
import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateCells, summarize, trajectory, type EnsembleOptions } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { simulateRun } from "@/ssa/node/run-engine";
import { solveOde } from "@/ssa/ode";

type Change = { at?: number; when?: string; delay?: number; set: Record<string, number> };

/** X made at rate k and lost at rate g per molecule, with a schedule; molecules, minutes. */
function birthDeath(k: number, g: number, schedule: Change[], x0 = 0) {
  const reactions: unknown[] = [{ id: "make", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }];
  if (g > 0) reactions.push({ id: "loss", reactants: { X: 1 }, rate: { law: "mass_action", k: "g" } });
  return parseCircuit({
    format: "burstwise.circuit/2",
    units: { time: "min", amount: "molecules" },
    species: [{ id: "X", initial: x0 }],
    parameters: { k, g },
    reactions,
    schedule,
  });
}

const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
const variance = (xs: number[]) => {
  const m = mean(xs);
  return xs.reduce((a, b) => a + (b - m) ** 2, 0) / (xs.length - 1);
};
/** z of a sample mean against μ, σ² (standard error σ/√n). */
const zMean = (xs: number[], mu: number, var_: number) => (mean(xs) - mu) / Math.sqrt(var_ / xs.length);
/** z of a sample variance against σ², for a distribution of excess kurtosis κ (SE ≈ σ²·√((2 + κ)/n)). */
const zVar = (xs: number[], var_: number, kappa: number) => (variance(xs) - var_) / (var_ * Math.sqrt((2 + kappa) / xs.length));

/** Each cell's first firing time of schedule entry e, from a partial's per-cell record. */
function firstTimes(p: ReturnType<typeof simulateCells>, entries: number, e = 0): number[] {
  const rec = p.segments[0].schedule!;
  const out: number[] = [];
  for (let c = 0; c < p.cells; c++) out.push(rec.firstAt[c * entries + e]);
  return out;
}

describe("triggered changes in the direct method", () => {
  const N = 50;
  const k = 1;
  const cells = 400;

  it("fires at the first reaction after which the condition holds: every cell stops at exactly N, at an Erlang(N, k) time (400 cells, seed 5, |z| <= 4)", () => {
    const m = compileModel(birthDeath(k, 0, [{ when: `X >= ${N}`, set: { k: 0 } }]));
    const o: EnsembleOptions = { method: "ssa", tEnd: 150, dt: 10, seed: 5, burnIn: 0 };
    const p = simulateCells(m, o, 0, cells);
    const s = summarize(m, o, p);
    expect(s.final.X.mean).toBe(N);
    expect(s.final.X.variance).toBe(0);
    const times = firstTimes(p, 1);
    expect(times.every((t) => t > 0)).toBe(true);
    const zm = zMean(times, N / k, N / k ** 2);
    const zv = zVar(times, N / k ** 2, 6 / N);
    expect(Math.abs(zm), `mean first-passage time ${mean(times)} vs ${N / k}: z = ${zm}`).toBeLessThanOrEqual(4);
    expect(Math.abs(zv), `variance ${variance(times)} vs ${N / k ** 2}: z = ${zv}`).toBeLessThanOrEqual(4);
    // The report: fired in every cell, once, the mean's interval over cells covering N/k.
    const f = s.schedule![0];
    expect(f).toMatchObject({ index: 0, when: `X >= ${N}`, delay: 0, set: { k: 0 }, cells, of: cells, firings_per_cell: 1 });
    expect(f.first_at!.mean).toBeCloseTo(mean(times), 9);
    expect(f.first_at!.ci![0]).toBeLessThan(N / k + 4 * Math.sqrt(N / cells));
    expect(f.first_at!.ci![1]).toBeGreaterThan(N / k - 4 * Math.sqrt(N / cells));
    expect(f.first_at!.min).toBe(Math.min(...times));
  });

  it("a delay lets the cell run on: the count ends at N + Poisson(k·d), applied N/k + d on average (400 cells, seed 6, |z| <= 4)", () => {
    const d = 10;
    const m = compileModel(birthDeath(k, 0, [{ when: `X >= ${N}`, delay: d, set: { k: 0 } }]));
    const o: EnsembleOptions = { method: "ssa", tEnd: 150, dt: 10, seed: 6, burnIn: 0 };
    const p = simulateCells(m, o, 0, cells);
    const s = summarize(m, o, p);
    const n = cells;
    const zFinal = (s.final.X.mean - (N + k * d)) / Math.sqrt((k * d) / n);
    expect(Math.abs(zFinal), `final mean ${s.final.X.mean} vs ${N + k * d}`).toBeLessThanOrEqual(4);
    // Var of the final count is k·d (Poisson); SE of a variance ≈ σ²·√((2 + 1/λ)/n) for Poisson(λ).
    const zFinalVar = (s.final.X.variance - k * d) / (k * d * Math.sqrt((2 + 1 / (k * d)) / n));
    expect(Math.abs(zFinalVar), `final variance ${s.final.X.variance} vs ${k * d}`).toBeLessThanOrEqual(4);
    const times = firstTimes(p, 1);
    expect(Math.abs(zMean(times, N / k + d, N / k ** 2))).toBeLessThanOrEqual(4);
  });

  it("fires again each time the condition turns true: pure death from 20, refilled to 20 whenever X < 5; the first refill at the sum of exponentials (400 cells, seed 8, |z| <= 4)", () => {
    const g = 0.1;
    const m = compileModel(birthDeath(0, g, [{ when: "X < 5", set: { X: 20 } }], 20));
    const o: EnsembleOptions = { method: "ssa", tEnd: 200, dt: 10, seed: 8, burnIn: 0 };
    const p = simulateCells(m, o, 0, cells);
    const s = summarize(m, o, p);
    let mu = 0;
    let v = 0;
    for (let j = 5; j <= 20; j++) {
      mu += 1 / (g * j);
      v += 1 / (g * j) ** 2;
    }
    const times = firstTimes(p, 1);
    const z = zMean(times, mu, v);
    expect(Math.abs(z), `first refill ${mean(times)} vs ${mu}: z = ${z}`).toBeLessThanOrEqual(4);
    // About 200 / 15.1 ≈ 13 refills per cell; none ever shows fewer than 5 molecules on the grid.
    expect(s.schedule![0].firings_per_cell).toBeGreaterThan(10);
    expect(s.schedule![0].firings_per_cell).toBeLessThan(16);
    expect(Math.min(...s.quantiles.X.p05)).toBeGreaterThanOrEqual(5);
  });

  it("gives the same bytes for 1 and 2 threads, and a replayed cell reports the firing of that cell in the ensemble", async () => {
    const c = birthDeath(1, 0.01, [{ when: "X >= 30", delay: 3, set: { k: 0.2 } }, { at: 120, set: { k: 1 } }]);
    const run = { method: "ssa", tEnd: 200, dt: 5, seed: 21, runs: 24, burnIn: 0 } as const;
    const strip = (x: object) => JSON.stringify({ ...x, wall_s: 0, events_per_s: 0 });
    const one = await simulateRun(c, { ...run, threads: 1 });
    const two = await simulateRun(c, { ...run, threads: 2, chunk: 5 });
    expect(strip(two)).toBe(strip(one));
    expect(one.schedule!.map((f) => f.cells)).toEqual([24, 24]);
    const m = compileModel(c);
    const o: EnsembleOptions = { method: "ssa", tEnd: 200, dt: 5, seed: 21, burnIn: 0 };
    const p = simulateCells(m, o, 0, 24);
    const replay = trajectory(m, o, 7);
    expect(replay.schedule![0].first_at!.mean).toBe(firstTimes(p, 2)[7]);
    expect(replay.schedule![0]).toMatchObject({ cells: 1, of: 1 });
    const alone = summarize(m, o, simulateCells(m, o, 7, 8));
    expect(replay.values.X).toEqual(alone.mean.X);
  });

  it("warns when a triggered change never fired, naming its condition", () => {
    const m = compileModel(birthDeath(1, 0.1, [{ when: "X > 1000", set: { k: 0 } }]));
    const o: EnsembleOptions = { method: "ssa", tEnd: 50, dt: 10, seed: 1, burnIn: 0 };
    const s = summarize(m, o, simulateCells(m, o, 0, 5));
    expect(s.schedule![0]).toMatchObject({ cells: 0, of: 5, first_at: null });
    expect(s.warnings.find((w) => w.code === "schedule-never-fired")?.field).toBe("schedule[0].when");
  });

  it("tau-leaping ends a leap at a timed change: with 10,000 molecules (long leaps), every cell applies the change at exactly its time, off the grid", () => {
    const m = compileModel(birthDeath(1000, 0.1, [{ at: 101.5, set: { k: 2000 } }], 10_000));
    const o: EnsembleOptions = { method: "tau", tEnd: 150, dt: 10, seed: 2, burnIn: 0 };
    const p = simulateCells(m, o, 0, 20);
    const rec = p.segments[0].schedule!;
    expect([...rec.firstAt]).toEqual(Array(20).fill(101.5));
    expect([...rec.count]).toEqual(Array(20).fill(1));
    // leaps, not direct steps: far fewer steps than reactions (about 1,000 reactions per minute)
    const s = summarize(m, o, p);
    expect(s.mean.X[s.times.indexOf(150)]).toBeGreaterThan(15_000);
  });

  it("tau-leaping checks the condition after each leap: never early, late by at most a leap, and it says so in a warning (400 cells, seed 5)", async () => {
    const c = birthDeath(k, 0, [{ when: `X >= ${N}`, set: { k: 0 } }]);
    const m = compileModel(c);
    const o: EnsembleOptions = { method: "tau", tEnd: 150, dt: 10, seed: 5, burnIn: 0 };
    const p = simulateCells(m, o, 0, cells);
    const s = summarize(m, o, p);
    // Every cell reached N; a leap may overshoot it, but the birth stopped right after.
    expect(s.final.X.mean).toBeGreaterThanOrEqual(N);
    expect(s.final.X.mean).toBeLessThan(N * 1.2);
    const times = firstTimes(p, 1);
    expect(times.every((t) => t > 0)).toBe(true);
    // Firing at the end of a leap cannot be earlier than the Erlang time: the mean is not below N/k − 4·SE.
    expect(zMean(times, N / k, N / k ** 2)).toBeGreaterThan(-4);
    expect(s.warnings.find((w) => w.code === "schedule-trigger-after-leap")?.field).toBe("schedule[0].when");
    // same bytes for any threads
    const run = { method: "tau", tEnd: 100, dt: 5, seed: 3, runs: 20, burnIn: 0 } as const;
    const strip = (x: object) => JSON.stringify({ ...x, wall_s: 0, events_per_s: 0 });
    expect(strip(await simulateRun(c, { ...run, threads: 2, chunk: 3 }))).toBe(strip(await simulateRun(c, { ...run, threads: 1 })));
  });
});

describe("triggered changes in the mean field", () => {
  it("finds the crossing of dX/dt = k − g·X at t* = −ln(1 − gN/k)/g, then decays as N·e^(−g(t − t*))", () => {
    const [k, g, N] = [2, 0.01, 100];
    const tStar = -Math.log(1 - (g * N) / k) / g; // 69.3147… min
    const m = compileModel(birthDeath(k, g, [{ when: `X >= ${N}`, set: { k: 0 } }]));
    const sol = solveOde(m, { tEnd: 300, dt: 10, rtol: 1e-10, atol: 1e-10 });
    const rec = sol.firings!;
    expect(rec.count[0]).toBe(1);
    expect(Math.abs(rec.firstAt[0] - tStar)).toBeLessThan(1e-5);
    sol.times.forEach((t, i) => {
      const want = t < tStar ? (k / g) * (1 - Math.exp(-g * t)) : N * Math.exp(-g * (t - tStar));
      expect(Math.abs(sol.trace.X[i] - want), `t = ${t}`).toBeLessThan(1e-4 * N);
    });
  });

  it("applies a delayed change at the crossing plus the delay, and a condition true at the start fires at time 0", () => {
    const [k, g, N, d] = [2, 0.01, 100, 15];
    const tStar = -Math.log(1 - (g * N) / k) / g;
    const m = compileModel(birthDeath(k, g, [{ when: `X >= ${N}`, delay: d, set: { X: 0 } }, { when: "X < 1", set: { g } }]));
    const sol = solveOde(m, { tEnd: 200, dt: 1, rtol: 1e-10, atol: 1e-10 });
    expect(Math.abs(sol.firings!.firstAt[0] - (tStar + d))).toBeLessThan(1e-5);
    // X(0) = 0 < 1: the second trigger fires at 0, and again each time X is reset to 0: at
    // t* + d ≈ 84.3 and, after X climbs to N once more, at 2(t* + d) ≈ 168.6.
    expect(sol.firings!.firstAt[1]).toBe(0);
    expect(sol.firings!.count[0]).toBe(2);
    expect(sol.firings!.count[1]).toBe(3);
    const at = sol.times.indexOf(Math.ceil(tStar + d));
    expect(sol.trace.X[at]).toBeLessThan(sol.trace.X[at - 1]);
  });

  it("the ODE and the stochastic mean agree where the crossing is sharp: birth at k = 20/min to N = 2000 (both report t* within |z| <= 4)", async () => {
    const [k, N] = [20, 2000];
    const c = birthDeath(k, 0, [{ when: `X >= ${N}`, set: { k: 0 } }]);
    const ode = await simulateRun(c, { method: "ode", tEnd: 200, dt: 10 });
    const ssa = await simulateRun(c, { method: "ssa", tEnd: 200, dt: 10, seed: 9, runs: 100, burnIn: 0, threads: 1 });
    const tOde = ode.schedule![0].first_at!.mean;
    expect(Math.abs(tOde - N / k)).toBeLessThan(1e-4);
    const f = ssa.schedule![0].first_at!;
    const z = (f.mean - tOde) / (f.sd / Math.sqrt(100));
    expect(Math.abs(z), `SSA ${f.mean} vs ODE ${tOde}`).toBeLessThanOrEqual(4);
    expect(ssa.final.X.mean).toBe(N);
    expect(ode.final.X.mean).toBeCloseTo(N, 3);
  });
});

describe("triggered changes: the circuit file's rules", () => {
  const refuse = (schedule: unknown) => {
    try {
      birthDeath(1, 0.1, schedule as Change[]);
    } catch (e) {
      return (e as Error).message;
    }
    return "accepted";
  };

  it("reads a triggered change with and without a delay", () => {
    expect(birthDeath(1, 0.1, [{ when: "X > 5 and not (X > 50)", delay: 2, set: { k: 0 } }]).schedule).toEqual([{ when: "X > 5 and not (X > 50)", delay: 2, set: { k: 0 } }]);
  });

  it("refuses each bad triggered change with one line naming the field", () => {
    expect(refuse([{ at: 1, when: "X > 5", set: { k: 0 } }])).toBe('schedule[0]: has both "at" and "when"; a change is either timed or triggered');
    expect(refuse([{ set: { k: 0 } }])).toBe('schedule[0]: needs "at" (a time) or "when" (a condition on species)');
    expect(refuse([{ at: 1, delay: 2, set: { k: 0 } }])).toMatch(/^schedule\[0\]\.delay: applies only to a triggered change/);
    expect(refuse([{ when: "X == 5", set: { k: 0 } }])).toMatch(/^schedule\[0\]\.when: "==" compares exactly/);
    expect(refuse([{ when: "Y > 5", set: { k: 0 } }])).toBe('schedule[0].when: unknown symbol "Y" (not a species or parameter)');
    expect(refuse([{ when: "k > 5", set: { k: 0 } }])).toMatch(/^schedule\[0\]\.when: reads no species/);
    expect(refuse([{ when: "X > 5 and", set: { k: 0 } }])).toMatch(/^schedule\[0\]\.when: ends too early/);
    expect(refuse([{ when: "(X > 5", set: { k: 0 } }])).toMatch(/^schedule\[0\]\.when: a "\(" is not closed/);
    expect(refuse([{ when: "X > 5", delay: -1, set: { k: 0 } }])).toMatch(/^schedule\[0\]\.delay: must be >= 0/);
    expect(refuse([{ when: 5, set: { k: 0 } }])).toMatch(/^schedule\[0\]\.when: must be a condition/);
    expect(refuse([{ when: "(".repeat(40) + "X > 1" + ")".repeat(40), set: { k: 0 } }])).toMatch(/^schedule\[0\]\.when: condition nested more than 16 deep/);
    // timed changes keep their order among themselves, triggered ones in between do not matter
    expect(refuse([{ at: 10, set: { k: 0 } }, { when: "X > 5", set: { k: 1 } }, { at: 5, set: { k: 2 } }])).toBe("schedule[2].at: must not be earlier than schedule[0].at (10)");
  });
});
