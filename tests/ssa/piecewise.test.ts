/**
 * piecewise, relations, logical operators and the time t in rate formulas (issue 14): parsing,
 * printing and evaluation; the direct method on a state-dependent piecewise against the exact
 * stationary law of a birth–death chain, identical across kernels and threads; the ODE with a
 * time-dependent rate against its closed form; SBML import against an independent ODE solution;
 * export and import again; the refusals.
 */
import { spawnSync } from "node:child_process";
import { createRequire } from "node:module";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { describe, expect, it } from "vitest";

import { CircuitError, parseCircuit } from "@/lib/schemas/circuit";
import { estimateRunCost } from "@/lib/view/run-cost";
import { analyze } from "@/ssa/analyze";
import { compileExpression, parseExpression, timeBreakpoints, type Expr } from "@/ssa/expr";
import { simulateCells, simulateEnsemble, summarize, type EnsembleOptions } from "@/ssa/ensemble";
import { rateJacobian, rateTimeDerivative } from "@/ssa/lna";
import { compileModel, type Model } from "@/ssa/model";
import { simulateRun } from "@/ssa/node/run-engine";
import { solveOde } from "@/ssa/ode";
import { cellRngState } from "@/ssa/rng";
import { sbmlToCircuit } from "@/ssa/sbml";
import { circuitToSbml } from "@/ssa/sbml-export";
import { exprToMathML, printFormula, readMath, translate, type Formula } from "@/ssa/sbml-math";
import { compileTauKernel } from "@/ssa/tau-kernel";
import { tauKernel } from "@/ssa/tau";
import { wasmKernelRefusal } from "@/ssa/wasm-kernel";
import { ModelInputError, type Circuit } from "@/ssa/types";

/** odex (Bulirsch–Stoer), the independent integrator (see tests/ssa/ode.test.ts for why it is loaded this way). */
interface OdexSolver {
  absoluteTolerance: number;
  relativeTolerance: number;
  maxSteps: number;
  solve(f: (x: number, y: number[]) => number[], x: number, y0: number[], xEnd: number): { y: number[] };
}
const { Solver } = createRequire(import.meta.url)("odex") as { Solver: new (n: number) => OdexSolver };

const scope = { isSpecies: (id: string) => id === "A" || id === "B", isParameter: (id: string) => id === "k" || id === "N" };
const species = new Map([["A", 0], ["B", 1]]);
const params = new Map([["k", 2], ["N", 10]]);
function parsed(text: string): Expr {
  const r = parseExpression(text, scope);
  if (!r.ok) throw new Error(`${text}: ${r.reason}`);
  return r.expr;
}
const value = (text: string, A: number, B: number, t = 0) => compileExpression(parsed(text), species, params)(Float64Array.from([A, B]), t);
const reason = (text: string) => {
  const r = parseExpression(text, scope);
  return r.ok ? "accepted" : r.reason;
};

describe("formula language: parse and evaluate", () => {
  // Expected values worked out by hand from the definitions (README "Rate formulas").
  const cases: [string, number, number, number, number][] = [
    // formula, A, B, t, value
    ["piecewise(1, A < 10, 0)", 9, 0, 0, 1],
    ["piecewise(1, A < 10, 0)", 10, 0, 0, 0],
    ["piecewise(1, A <= 10, 0)", 10, 0, 0, 1],
    ["piecewise(1, A > 10, 0)", 10, 0, 0, 0],
    ["piecewise(1, A >= 10, 0)", 10, 0, 0, 1],
    ["piecewise(1, A == B, 0)", 3, 3, 0, 1],
    ["piecewise(1, A != B, 0)", 3, 3, 0, 0],
    ["piecewise(1, A < N and B > 2, 0)", 3, 3, 0, 1],
    ["piecewise(1, A < N and B > 2, 0)", 3, 2, 0, 0],
    ["piecewise(1, A > N or B > 2, 0)", 3, 2, 0, 0],
    ["piecewise(1, A > N or B > 2, 0)", 11, 2, 0, 1],
    ["piecewise(1, A > 1 xor B > 1, 0)", 2, 2, 0, 0],
    ["piecewise(1, A > 1 xor B > 1, 0)", 2, 0, 0, 1],
    ["piecewise(1, not (A > 1), 0)", 2, 0, 0, 0],
    ["piecewise(1, true, 0)", 0, 0, 0, 1],
    ["piecewise(1, false, 0)", 0, 0, 0, 0],
    // the first piece that holds wins; pieces are checked in order
    ["piecewise(5, A < 3, 7, A < 6, 9)", 1, 0, 0, 5],
    ["piecewise(5, A < 3, 7, A < 6, 9)", 4, 0, 0, 7],
    ["piecewise(5, A < 3, 7, A < 6, 9)", 8, 0, 0, 9],
    // nested, and inside arithmetic
    ["k * piecewise(piecewise(2, B > 0, 3), A < 10, 0) + 1", 1, 1, 0, 5],
    ["k * piecewise(1, t < 50, 0.2)", 0, 0, 49, 2],
    ["k * piecewise(1, t < 50, 0.2)", 0, 0, 50, 0.4],
    ["k * t + A", 1, 0, 3, 7],
    // mathjs precedence: and binds tighter than or
    ["piecewise(1, A > 5 or A > 1 and A < 0, 0)", 3, 0, 0, 0],
  ];
  for (const [text, A, B, t, expected] of cases) {
    it(`parseExpression("${text}") evaluates to ${expected} at A = ${A}, B = ${B}, t = ${t}`, () => {
      expect(value(text, A, B, t)).toBe(expected);
    });
  }

  it("piecewise with no otherwise is undefined (NaN) when no piece holds, as SBML's", () => {
    expect(value("piecewise(2, A > 1)", 3, 0)).toBe(2);
    expect(value("piecewise(2, A > 1)", 0, 0)).toBeNaN();
  });

  it("a species or parameter named t is that symbol, not the time", () => {
    const r = parseExpression("2 * t", { isSpecies: (id) => id === "t", isParameter: () => false });
    expect(r.ok && r.expr).toEqual({ kind: "bin", op: "*", left: { kind: "num", value: 2 }, right: { kind: "species", id: "t" } });
    expect(parsed("2 * t")).toEqual({ kind: "bin", op: "*", left: { kind: "num", value: 2 }, right: { kind: "time" } });
  });

  it("refuses conditions as numbers and numbers as conditions, with the reason", () => {
    expect(reason("A > 5")).toBe("a condition (A > 5) cannot be a rate; use piecewise(value, condition, otherwise)");
    expect(reason("A + (A < 2)")).toMatch(/^a condition \(A < 2\) cannot be used as a number in "\+"/);
    expect(reason("piecewise(1, A, 0)")).toMatch(/^piecewise\(\) argument 2 needs a condition such as A > 5, found the number A/);
    expect(reason("piecewise(A < 1, A < 2, 0)")).toMatch(/^a condition \(A < 1\) cannot be used as a number in piecewise\(\) argument 1/);
    expect(reason("not A > 5")).toMatch(/^"not" needs a condition, found the number A; write not \(A > 5\)/);
    expect(reason("A < 1 and 3")).toMatch(/^"and" needs a condition/);
    expect(reason("A < B < 3")).toMatch(/^a chained comparison/);
    expect(reason("A > 1 ? 2 : 3")).toMatch(/write piecewise\(b, a, c\)/);
    expect(reason("piecewise(1)")).toMatch(/^piecewise\(\) takes a value and a condition/);
    expect(reason(`piecewise(${Array.from({ length: 65 }, () => "1, A < 1").join(", ")}, 0)`)).toBe("piecewise() takes at most 64 pieces, got 65");
  });

  it("refuses deeply nested piecewise and long condition chains within the formula limits", () => {
    const nested = "piecewise(1, A < 1, ".repeat(120) + "0" + ")".repeat(120);
    expect(reason(nested)).toBe("formula has parentheses nested more than 100 deep");
    const nots = "piecewise(1, " + "not ".repeat(300) + "true, 0)";
    expect(reason(nots)).toBe("formula nested more than 200 deep");
    const chain = "piecewise(1, " + Array.from({ length: 450 }, () => "A<1").join(" and ") + ", 0)";
    expect(chain.length).toBeLessThan(4000);
    expect(reason(chain)).toBe("formula nested more than 200 deep");
  });
});

/** A production whose rate steps down with the count, and first-order loss (molecules, Ω = 1). */
const capped = (format: "burstwise.circuit/1" = "burstwise.circuit/1"): Circuit =>
  parseCircuit({
    format,
    units: { time: "min", amount: "molecules" },
    species: [{ id: "A", initial: 0 }],
    parameters: { k1: 20, k2: 5, g: 1 },
    reactions: [
      { id: "make", products: { A: 1 }, rate: { law: "expression", expression: "piecewise(k1, A < 10, k2, A < 15 and not (A >= 15), 0)" } },
      { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
    ],
  });

/**
 * Stationary law of a birth–death chain by detailed balance, π(n+1)·μ(n+1) = π(n)·λ(n) (common
 * practice; e.g. Gardiner, Handbook of Stochastic Methods, §7.1): here λ(n) = 20 for n < 10,
 * 5 for 10 ≤ n < 15, 0 beyond; μ(n) = n.
 */
function cappedStationary(): { mean: number; variance: number } {
  const lambda = (n: number) => (n < 10 ? 20 : n < 15 ? 5 : 0);
  const p = [1];
  for (let n = 0; n < 15; n++) p.push((p[n] * lambda(n)) / (n + 1));
  const z = p.reduce((a, b) => a + b, 0);
  const mean = p.reduce((a, b, n) => a + (n * b) / z, 0);
  const second = p.reduce((a, b, n) => a + (n * n * b) / z, 0);
  return { mean, variance: second - mean * mean };
}

const statsOf = (s: ReturnType<typeof summarize>) => JSON.stringify([s.times, s.mean, s.sd, s.quantiles, s.final, s.stationary, s.period, s.events]);

describe("state-dependent piecewise in stochastic runs", () => {
  it("the direct method's final counts match the birth–death chain's stationary law (|z| ≤ 4, 4000 cells)", () => {
    const m = compileModel(capped());
    const runs = 4000;
    // t_end = 20 relaxation times (1/g = 1 min): the start is forgotten to e^−20.
    const s = simulateEnsemble(m, { method: "ssa", tEnd: 20, dt: 1, seed: 7 }, runs);
    const exact = cappedStationary();
    const f = s.final.A as { mean: number; variance: number };
    const z = (f.mean - exact.mean) / Math.sqrt(exact.variance / runs);
    expect(Math.abs(z)).toBeLessThanOrEqual(4);
    // no cell ever passes the cap: production is 0 at 15
    expect(Math.max(...(s.quantiles.A as { p95: number[] }).p95)).toBeLessThanOrEqual(15);
  });

  it("the generated and the generic direct kernels give identical bytes for a seed; wasm refuses and the default is the generated kernel", () => {
    const m = compileModel(capped());
    const o: EnsembleOptions = { method: "ssa", tEnd: 30, dt: 0.5, seed: 11 };
    expect(wasmKernelRefusal(m)).toMatch(/formula rate/);
    const generated = statsOf(summarize(m, o, simulateCells(m, { ...o, kernel: "generated" }, 0, 50)));
    const generic = statsOf(summarize(m, o, simulateCells(compileModel(capped()), { ...o, kernel: "generic" }, 0, 50)));
    const byDefault = statsOf(summarize(m, o, simulateCells(compileModel(capped()), o, 0, 50)));
    expect(generic).toBe(generated);
    expect(byDefault).toBe(generated);
  });

  it("the generated and the generic tau-leaping kernels follow the same path for the same stream", () => {
    const m = compileModel(capped());
    const nT = 61;
    const grid = new Float64Array(nT + 1);
    for (let g = 0; g < nT; g++) grid[g] = g * 0.5;
    grid[nT] = Infinity;
    const run = (kernel: ReturnType<typeof tauKernel>, seed: number) => {
      const out = new Float64Array(nT);
      const rs = cellRngState(seed, 0);
      const x = m.initialCounts.slice();
      const events = kernel(x, rs, grid, nT, out, 0, 1, 1e12);
      return { events, out: Array.from(out), rs: Array.from(rs) };
    };
    for (const seed of [1, 2, 3]) {
      const a = run(compileTauKernel(m, { epsilon: 0.05 }), seed);
      expect(a.events).toBeGreaterThan(100);
      expect(a).toEqual(run(tauKernel(m, { epsilon: 0.05 }), seed));
    }
  });

  it("simulateRun gives the same bytes with 1 and 2 threads", async () => {
    const run = { method: "ssa", tEnd: 20, dt: 1, seed: 5, runs: 40, burnIn: 5 } as const;
    const one = statsOf(await simulateRun(capped(), { ...run, threads: 1 }));
    const two = statsOf(await simulateRun(capped(), { ...run, threads: 2, chunk: 3 }));
    expect(two).toBe(one);
  });
});

/** Production k·piecewise(1, t < 50, 0.2) and first-order loss g (molecules per min). */
const timed = (expression = "k * piecewise(1, t < 50, 0.2)"): Circuit =>
  parseCircuit({
    format: "burstwise.circuit/1",
    units: { time: "min", amount: "molecules" },
    species: [{ id: "A", initial: 0 }],
    parameters: { k: 10, g: 0.1 },
    reactions: [
      { id: "make", products: { A: 1 }, rate: { law: "expression", expression } },
      { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: "g" } },
    ],
  });

describe("time t in the ODE", () => {
  // dA/dt = s(t) − g·A with s piecewise constant: A = s/g + (A₀ − s/g)·e^(−g(t − t₀)) on each piece (textbook linear ODE).
  const closed = (t: number) => {
    const k = 10;
    const g = 0.1;
    if (t <= 50) return (k / g) * (1 - Math.exp(-g * t));
    const a50 = (k / g) * (1 - Math.exp(-g * 50));
    return (0.2 * k) / g + (a50 - (0.2 * k) / g) * Math.exp(-g * (t - 50));
  };
  for (const method of ["dopri5", "rosenbrock"] as const) {
    it(`solveOde(${method}) of k·piecewise(1, t < 50, 0.2) follows the closed form to 1e-6`, () => {
      const s = solveOde(compileModel(timed()), { tEnd: 100, dt: 1, method, rtol: 1e-10, atol: 1e-10 });
      s.times.forEach((t, i) => expect(Math.abs((s.trace.A as number[])[i] - closed(t))).toBeLessThanOrEqual(1e-6 * Math.max(1, closed(t))));
    });
  }

  it("solveOde with its default tolerances meets the jump at t = 50 exactly: relative error ≤ 1e-6 on grids that do and do not hit 50", () => {
    // Left to the step-size control the jump cost 2e-5 of relative error (12 rejected steps).
    // t <= 50 holds at 50 itself: the piece after the switch must still not see that value.
    for (const [dt, expression] of [[1, undefined], [0.7, undefined], [1, "k * piecewise(1, t <= 50, 0.2)"], [1, "k * piecewise(0.2, t > 50, 1)"]] as const) {
      for (const method of ["dopri5", "rosenbrock"] as const) {
        const s = solveOde(compileModel(timed(expression)), { tEnd: 100, dt, method });
        s.times.forEach((t, i) => expect(Math.abs((s.trace.A as number[])[i] - closed(t))).toBeLessThanOrEqual(1e-6 * Math.max(1, closed(t))));
        expect(s.stats.rejected).toBe(0);
      }
    }
  });

  it("timeBreakpoints finds where conditions on time alone switch, and none for species or non-linear time", () => {
    const ps = new Map([["k", 2]]);
    const bp = (text: string) => timeBreakpoints(parsed(text), ps);
    expect(bp("piecewise(1, t < 50, 0)")).toEqual([50]);
    expect(bp("piecewise(1, t * 0.5 >= 20 and 3 > t - k, 0)")).toEqual([40, 5]);
    expect(bp("piecewise(1, (t + 1) / 4 == k, 0)")).toEqual([7]);
    expect(bp("piecewise(1, A < t, 0, exp(t) < 3, 1, t^2 < 4, 2, t * t < 1, 3)")).toEqual([]);
  });

  it("solveOde of k·exp(−t/20) follows A = k/(g − 1/20)·(e^(−t/20) − e^(−gt)) to 1e-7, both methods", () => {
    const exact = (t: number) => (10 / (0.1 - 0.05)) * (Math.exp(-t / 20) - Math.exp(-0.1 * t));
    for (const method of ["dopri5", "rosenbrock"] as const) {
      const s = solveOde(compileModel(timed("k * exp(-t / 20)")), { tEnd: 100, dt: 5, method, rtol: 1e-10, atol: 1e-10 });
      s.times.forEach((t, i) => expect(Math.abs((s.trace.A as number[])[i] - exact(t))).toBeLessThanOrEqual(1e-7 * Math.max(1, exact(t))));
    }
  });

  it("solveOde of a /2 circuit whose schedule doubles k at 30 while the rate reads t: each piece restarts the clock at its own time", () => {
    // Production 10 on [0, 30), 20 on [30, 50), 20·0.2 = 4 from 50; loss 0.1·A (closed form per piece, as above).
    const c = parseCircuit({ ...timed(), format: "burstwise.circuit/2", schedule: [{ at: 30, set: { k: 20 } }] });
    const pieces: [number, number, number][] = [[0, 30, 10], [30, 50, 20], [50, Infinity, 4]];
    const exact = (t: number) => {
      let a = 0;
      for (const [from, to, s] of pieces) {
        if (t <= from) break;
        const end = Math.min(t, to);
        a = s / 0.1 + (a - s / 0.1) * Math.exp(-0.1 * (end - from));
      }
      return a;
    };
    const s = solveOde(compileModel(c), { tEnd: 100, dt: 1, rtol: 1e-10, atol: 1e-10 });
    s.times.forEach((t, i) => expect(Math.abs((s.trace.A as number[])[i] - exact(t))).toBeLessThanOrEqual(1e-6 * Math.max(1, exact(t))));
  });

  it("rateTimeDerivative is ∂f/∂t (against a central difference) and rateJacobian the active piece's derivative", () => {
    const m = compileModel(timed("k * exp(-t / 20) * A + piecewise(A^2, A < 5, 3 * A)"));
    const out = new Float64Array(2);
    const y = Float64Array.from([2]);
    rateTimeDerivative(m, y, 7, out);
    const f = (t: number) => {
      const r = new Float64Array(2);
      m.rates(y, r, t);
      return r[0];
    };
    const h = 1e-4;
    expect(out[0]).toBeCloseTo((f(7 + h) - f(7 - h)) / (2 * h), 8);
    expect(out[1]).toBe(0);
    // ∂/∂A at A = 2 (first piece): k·e^(−t/20) + 2A; at A = 7 (second piece): k·e^(−t/20) + 3; t = 0.
    expect(rateJacobian(m, Float64Array.from([2]))[0]).toBeCloseTo(10 + 4, 12);
    expect(rateJacobian(m, Float64Array.from([7]))[0]).toBeCloseTo(10 + 3, 12);
  });
});

describe("analyze with piecewise and time", () => {
  it("analyze of a piecewise rate off its switch: eigenvalue −g and the LNA's Poisson Fano factor 1", () => {
    // Production 3 while A < 100, loss 0.1·A: steady state 30 on the first piece; a birth–death
    // process with constant birth is Poisson (common practice), so Fano = 1, and J = −0.1.
    const a = analyze(compileModel(parseCircuit({
      format: "burstwise.circuit/1", units: { time: "min", amount: "molecules" }, species: [{ id: "A", initial: 0 }], parameters: {},
      reactions: [
        { id: "make", products: { A: 1 }, rate: { law: "expression", expression: "piecewise(3, A < 100, 0)" } },
        { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: 0.1 } },
      ],
    })));
    expect(a.steady_state.A).toBeCloseTo(30, 8);
    expect(a.eigenvalues[0].re).toBeCloseTo(-0.1, 10);
    expect(a.lna?.fano.A).toBeCloseTo(1, 8);
  });

  it("analyze refuses a steady state on a piecewise switch, naming the reaction", () => {
    // Production 20 while A < 10, else 10; loss 1·A: the flow stops exactly at A = 10, the switch.
    const c = parseCircuit({
      format: "burstwise.circuit/1", units: { time: "min", amount: "molecules" }, species: [{ id: "A", initial: 0 }], parameters: {},
      reactions: [
        { id: "make", products: { A: 1 }, rate: { law: "expression", expression: "piecewise(20, A < 10, 10)" } },
        { id: "lose", reactants: { A: 1 }, rate: { law: "mass_action", k: 1 } },
      ],
    });
    expect(() => analyze(compileModel(c))).toThrow(/^reactions\[0\]\.rate\.expression: the steady state \(A = 10\) sits where a piecewise condition switches, so the rate has no derivative there/);
  });

  it("analyze refuses a rate that reads time, naming the reaction", () => {
    expect(() => analyze(compileModel(timed()))).toThrow(ModelInputError);
    expect(() => analyze(compileModel(timed()))).toThrow("reactions[0].rate.expression: depends on time t; a steady state, its stability and the LNA need rates that depend on the state only");
  });
});

describe("refusals of stochastic runs that read time", () => {
  const message = "reactions[0].rate.expression: depends on time t; stochastic runs need rates that depend on the state only (use a schedule for a timed change)";
  it("simulateEnsemble and simulateRun (ssa, tau) refuse a rate that reads t, naming the reaction", async () => {
    expect(() => simulateEnsemble(compileModel(timed()), { method: "ssa", tEnd: 10, dt: 1, seed: 1 }, 2)).toThrow(message);
    for (const method of ["ssa", "tau"] as const) {
      await expect(simulateRun(timed(), { method, tEnd: 10, dt: 1, seed: 1, runs: 2, threads: 1 })).rejects.toThrow(message);
    }
  });

  it("the launcher's cost estimate (estimateRunCost) says why for ssa, and is 0 events for ode", () => {
    expect(() => estimateRunCost(timed(), { method: "ssa", tEnd: 10, cells: 2 })).toThrow(message);
    expect(estimateRunCost(timed(), { method: "ode", tEnd: 10, cells: 1 }).eventsPerCell).toBe(0);
  });

  it("the circuit itself is valid: the schema accepts it and the ODE runs it", async () => {
    const s = await simulateRun(timed(), { method: "ode", tEnd: 10, dt: 1, threads: 1 });
    expect((s.trace?.A as number[])[10]).toBeCloseTo(100 * (1 - Math.exp(-1)), 5);
  });
});

describe("the command line", () => {
  const dir = mkdtempSync(join(tmpdir(), "bw-pw-"));
  const cli = (...args: string[]) => spawnSync(process.execPath, ["scripts/cli.mjs", ...args], { encoding: "utf8", timeout: 120_000 });
  const write = (name: string, c: unknown) => {
    const path = join(dir, name);
    writeFileSync(path, JSON.stringify(c));
    return path;
  };

  it("simulate --method ssa of a rate reading t exits 2 naming the reaction; --method ode runs it", () => {
    const path = write("timed.circuit.json", timed());
    const ssa = cli("simulate", path, "--t-end", "10", "--dt", "1", "--runs", "2", "--seed", "1", "--threads", "1");
    expect(ssa.status).toBe(2);
    expect(ssa.stderr.trim()).toMatch(/reactions\[0\]\.rate\.expression: depends on time t; stochastic runs need rates that depend on the state only/);
    expect(ssa.stderr.trim().split("\n")).toHaveLength(1);
    const ode = cli("simulate", path, "--method", "ode", "--t-end", "10", "--dt", "1");
    expect(ode.status).toBe(0);
    const an = cli("analyze", path);
    expect(an.status).toBe(2);
    expect(an.stderr.trim()).toMatch(/reactions\[0\]\.rate\.expression: depends on time t; a steady state, its stability and the LNA need rates that depend on the state only/);
  });

  it("a relation as a rate exits 2 naming the field", () => {
    const c = { ...timed(), reactions: [timed().reactions[0], timed().reactions[1], { id: "bad", reactants: { A: 1 }, rate: { law: "expression", expression: "A > 5" } }] };
    const r = cli("simulate", write("relation.circuit.json", c), "--t-end", "10", "--dt", "1");
    expect(r.status).toBe(2);
    expect(r.stderr.trim()).toMatch(/reactions\[2\]\.rate\.expression: a condition \(A > 5\) cannot be a rate; use piecewise\(/);
  });

  it("a schema error for a relation as a rate names the field (parseCircuit)", () => {
    const c = { ...timed(), reactions: [{ id: "bad", products: { A: 1 }, rate: { law: "expression", expression: "A > 5" } }] };
    expect(() => parseCircuit(c)).toThrow(CircuitError);
    expect(() => parseCircuit(c)).toThrow(/reactions\[0\]\.rate\.expression: a condition \(A > 5\) cannot be a rate/);
  });
});

const MATH = 'xmlns="http://www.w3.org/1998/Math/MathML"';
const TIME = '<csymbol encoding="text" definitionURL="http://www.sbml.org/sbml/symbols/time"> time </csymbol>';
/**
 * SBML L3V2, amounts in items, time in seconds: production s(t) =
 * 0.5 before 20 s, k1 on [20, 60), 0.5 on [60, 90), k2 from 90 on (a piece with `xor` and
 * `<false/>`, the last piece `<true/>` and no otherwise), times piecewise(1, A ≥ 0, 0), which is 1
 * on the path; loss g·A.
 */
const fixture = `<?xml version="1.0" encoding="UTF-8"?>
<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
  <model id="pulse" substanceUnits="item" timeUnits="second" extentUnits="item">
    <listOfCompartments><compartment id="c" size="1" spatialDimensions="3" constant="true"/></listOfCompartments>
    <listOfSpecies><species id="A" compartment="c" initialAmount="0" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/></listOfSpecies>
    <listOfParameters>
      <parameter id="k1" value="10" constant="true"/><parameter id="k2" value="2" constant="true"/><parameter id="g" value="0.1" constant="true"/>
      <parameter id="t" value="0.5" constant="true"/>
    </listOfParameters>
    <listOfReactions>
      <reaction id="make" reversible="false">
        <listOfProducts><speciesReference species="A" stoichiometry="1" constant="true"/></listOfProducts>
        <kineticLaw><math ${MATH}><apply><times/>
          <piecewise>
            <piece><ci> k1 </ci><apply><and/><apply><geq/>${TIME}<cn> 20 </cn></apply><apply><lt/>${TIME}<cn> 60 </cn></apply></apply></piece>
            <piece><ci> k2 </ci><apply><xor/><apply><not/><apply><lt/>${TIME}<cn> 90 </cn></apply></apply><false/></apply></piece>
            <piece><ci> t </ci><true/></piece>
          </piecewise>
          <piecewise><piece><cn> 1 </cn><apply><geq/><ci> A </ci><cn> 0 </cn></apply></piece><otherwise><cn> 0 </cn></otherwise></piecewise>
        </apply></math></kineticLaw>
      </reaction>
      <reaction id="lose" reversible="false">
        <listOfReactants><speciesReference species="A" stoichiometry="1" constant="true"/></listOfReactants>
        <kineticLaw><math ${MATH}><apply><times/><ci> g </ci><ci> A </ci></apply></math></kineticLaw>
      </reaction>
    </listOfReactions>
  </model>
</sbml>`;

/** The fixture's ODE solved by odex piece by piece, production constant on each (written out by hand). */
function fixtureByOdex(times: number[]): number[] {
  const pieces: [number, number, number][] = [[0, 20, 0.5], [20, 60, 10], [60, 90, 0.5], [90, 120, 2]];
  const out: number[] = [];
  for (const T of times) {
    let y = [0];
    for (const [a, b, s] of pieces) {
      if (T <= a) break;
      const solver = new Solver(1);
      solver.absoluteTolerance = 1e-12;
      solver.relativeTolerance = 1e-12;
      solver.maxSteps = 100_000;
      y = solver.solve((_x, v) => [s - 0.1 * v[0]], a, y, Math.min(b, T)).y;
    }
    out.push(y[0]);
  }
  return out;
}

describe("SBML import and export", () => {
  it("sbmlToCircuit translates piecewise, relations, and/xor/not, true/false and time; an SBML parameter t is renamed", () => {
    const imp = sbmlToCircuit(fixture);
    const make = imp.circuit.reactions.find((r) => r.id === "make");
    expect(make?.rate).toEqual({
      law: "expression",
      expression: "piecewise(k1, t >= 20 and t < 60, k2, not (t < 90) xor false, t_, true) * piecewise(1, A >= 0, 0)",
    });
    expect(imp.circuit.parameters?.t_).toBe(0.5);
    expect(imp.warnings.map((w) => w.message)).toContain('id "t" renamed "t_" (reserved in formulas)');
  });

  it("the imported fixture's ODE matches odex's solution (pieces integrated by hand) to 1e-6", () => {
    const c = parseCircuit(sbmlToCircuit(fixture).circuit);
    const s = solveOde(compileModel(c), { tEnd: 120, dt: 5, rtol: 1e-10, atol: 1e-10 });
    const ref = fixtureByOdex(s.times);
    expect(ref[s.times.indexOf(60)]).toBeGreaterThan(90); // the pulse happened
    s.times.forEach((t, i) => expect(Math.abs((s.trace.A as number[])[i] - ref[i])).toBeLessThanOrEqual(1e-6 * Math.max(1, ref[i])));
  });

  it("a file in days becomes a circuit in hours whose time csymbol reads t/24: the same path on the stretched clock", () => {
    const days = fixture
      .replace('timeUnits="second"', 'timeUnits="day"')
      .replace("<listOfCompartments>", '<listOfUnitDefinitions><unitDefinition id="day"><listOfUnits><unit kind="second" exponent="1" scale="0" multiplier="86400"/></listOfUnits></unitDefinition></listOfUnitDefinitions><listOfCompartments>');
    const c = parseCircuit(sbmlToCircuit(days).circuit);
    expect(c.units.time).toBe("h");
    expect((c.reactions.find((r) => r.id === "make")?.rate as { expression: string }).expression).toContain("t * 0.041666666666666664 >= 20");
    const s = solveOde(compileModel(c), { tEnd: 120 * 24, dt: 5 * 24, rtol: 1e-10, atol: 1e-10 });
    const ref = fixtureByOdex(s.times.map((t) => t / 24));
    s.times.forEach((t, i) => expect(Math.abs((s.trace.A as number[])[i] - ref[i])).toBeLessThanOrEqual(1e-6 * Math.max(1, ref[i])));
  });

  it("circuitToSbml writes piecewise, relations, logic and time as MathML, and importing it again (without our annotation) gives the same formulas and trace", () => {
    const expressions = [
      "k * piecewise(1, t < 50, 0.2)",
      // crosses its switch at A = 10 once (production 10, then 5, steady state 50)
      "piecewise(k, A < 10 and not (A > 20) or A == 3, k / 2, A != 4 xor false, 0)",
      "piecewise(2 * k, t >= 5, k, t <= 2 or t > 1)",
    ];
    for (const expression of expressions) {
      const c = timed(expression);
      const xml = circuitToSbml(c);
      if (/\bt\b/.test(expression)) expect(xml).toContain("http://www.sbml.org/sbml/symbols/time");
      expect(xml).toContain("<piecewise>");
      const bare = xml.replace(/<annotation>[\s\S]*?<\/annotation>/g, "");
      expect(bare).not.toContain("urn:burstwise:sbml:rate-law");
      const back = parseCircuit(sbmlToCircuit(bare).circuit);
      const rate = back.reactions.find((r) => r.id === "make")?.rate as { expression: string };
      const ps = { isSpecies: (id: string) => id === "A", isParameter: (id: string) => id === "k" || id === "g" };
      const a = parseExpression(expression, ps);
      const b = parseExpression(rate.expression, ps);
      expect(b).toEqual(a);
      if (!expression.includes("t >= 5")) {
        const o = { tEnd: 100, dt: 5, rtol: 1e-9, atol: 1e-9 };
        expect(solveOde(compileModel(back), o).trace.A).toEqual(solveOde(compileModel(c), o).trace.A);
      }
    }
  });

  it("circuitToSbml lists a species read only by a piecewise condition as a modifier of the reaction", () => {
    const c = parseCircuit({
      format: "burstwise.circuit/1", units: { time: "min", amount: "molecules" },
      species: [{ id: "A", initial: 0 }, { id: "B", initial: 3 }], parameters: { k: 2 },
      reactions: [{ id: "make", products: { A: 1 }, rate: { law: "expression", expression: "piecewise(k, B < 5 and t < 9, 0)" } }],
    });
    const xml = circuitToSbml(c);
    expect(xml).toMatch(/<reaction id="make"[\s\S]*<listOfModifiers>\s*<modifierSpeciesReference species="B"\/>\s*<\/listOfModifiers>[\s\S]*<\/reaction>/);
  });

  // libSBML's own consistency checks when its Perl binding is installed (as tests/ssa/sbml.test.ts; scripts/test.mjs installs it).
  const hasLibsbml = spawnSync("perl", ["-MLibSBML", "-e", "1"]).status === 0 || process.env.BURSTWISE_REQUIRE_LIBSBML === "1";
  it.skipIf(!hasLibsbml)("circuitToSbml of piecewise, relations, logic and time (molecules and nM) has no libSBML error", () => {
    const check = `use LibSBML; my $doc = LibSBML::readSBMLFromFile($ARGV[0]); $doc->checkConsistency();
for (my $i = 0; $i < $doc->getNumErrors(); $i++) { my $e = $doc->getError($i); print $e->getSeverityAsString(), " ", $e->getErrorId(), ": ", (split /\n/, $e->getMessage())[0], "\n"; }`;
    const dir = mkdtempSync(join(tmpdir(), "bw-pw-sbml-"));
    const nM = { ...timed("k * piecewise(1, t < 50 and A <= 30 or not (A > 3) xor true, 0.2)"), units: { time: "min" as const, amount: "nM" as const }, volume_fL: 2 };
    for (const [i, c] of [timed(), parseCircuit(nM)].entries()) {
      const file = join(dir, `pw-${i}.xml`);
      writeFileSync(file, circuitToSbml(c));
      const r = spawnSync("perl", ["-e", check, file], { encoding: "utf8" });
      expect(r.status).toBe(0);
      expect(r.stdout.split("\n").filter((l) => /^(Error|Fatal)/.test(l))).toEqual([]);
    }
  });

  it("exprToMathML → readMath → translate → printFormula keeps every construct", () => {
    const text = "piecewise(k, A < 10 and B >= 2 or not (A == B), t, A != 1 xor false, k * 2, A <= 3 and B > 1 or true, N)";
    const e = parsed(text);
    const xml = `<math ${MATH}>${exprToMathML(e)}</math>`;
    const { XMLParser } = createRequire(import.meta.url)("fast-xml-parser") as { XMLParser: new (o: object) => { parse(s: string): Record<string, unknown>[] } };
    const doc = new XMLParser({ preserveOrder: true, ignoreAttributes: false, attributeNamePrefix: "" }).parse(xml);
    const f: Formula = translate(readMath(doc[0] as Record<string, unknown>), { functions: new Map(), symbol: (id) => ({ k: "sym", id }), timeFactor: 1 });
    expect(parsed(printFormula(f))).toEqual(e);
  });

  it("sbmlToCircuit accepts piecewise nested 60 deep, refuses a condition nested past MAX_MATHML_DEPTH and piecewise that doubles through function definitions, naming the element", () => {
    const lose = /<kineticLaw><math [^>]*><apply><times\/><ci> g <\/ci><ci> A <\/ci><\/apply><\/math>/;
    let nested = "<apply><times/><ci> g </ci><ci> A </ci></apply>";
    for (let i = 0; i < 60; i++) nested = `<piecewise><piece>${nested}<apply><geq/><ci> A </ci><cn> 0 </cn></apply></piece><otherwise><cn> 0 </cn></otherwise></piecewise>`;
    const ok = parseCircuit(sbmlToCircuit(fixture.replace(lose, `<kineticLaw><math ${MATH}>${nested}</math>`)).circuit);
    expect(compileModel(ok).rates.length).toBeGreaterThan(0);
    const A = Float64Array.from([7]);
    const r = new Float64Array(2);
    compileModel(ok).rates(A, r);
    expect(r[1]).toBeCloseTo(0.7, 12); // g·A through 60 pieces whose condition holds
    let cond = "<apply><lt/><ci> A </ci><cn> 1 </cn></apply>";
    for (let i = 0; i < 120; i++) cond = `<apply><not/>${cond}</apply>`;
    const deepXml = fixture.replace(lose, `<kineticLaw><math ${MATH}><piecewise><piece><ci> g </ci>${cond}</piece><otherwise><cn> 0 </cn></otherwise></piecewise></math>`);
    expect(() => sbmlToCircuit(deepXml)).toThrow(/^sbml: reaction "lose" kineticLaw: MathML nested more than 100 deep/);
    // f_i(x) = piecewise(f_{i−1}(x), x > 0, f_{i−1}(x)): each link doubles the formula.
    const defs = [`<functionDefinition id="f0"><math ${MATH}><lambda><bvar><ci> x </ci></bvar><ci> x </ci></lambda></math></functionDefinition>`];
    for (let i = 1; i <= 40; i++) {
      defs.push(`<functionDefinition id="f${i}"><math ${MATH}><lambda><bvar><ci> x </ci></bvar><piecewise><piece><apply><ci> f${i - 1} </ci><ci> x </ci></apply><apply><gt/><ci> x </ci><cn> 0 </cn></apply></piece><otherwise><apply><ci> f${i - 1} </ci><ci> x </ci></apply></otherwise></piecewise></lambda></math></functionDefinition>`);
    }
    const doubling = fixture
      .replace("<listOfCompartments>", `<listOfFunctionDefinitions>${defs.join("")}</listOfFunctionDefinitions><listOfCompartments>`)
      .replace(/<kineticLaw><math [^>]*><apply><times\/><ci> g <\/ci><ci> A <\/ci><\/apply><\/math>/, `<kineticLaw><math ${MATH}><apply><ci> f40 </ci><ci> A </ci></apply></math>`);
    expect(() => sbmlToCircuit(doubling)).toThrow(/^sbml: functionDefinition "f\d+": expands to more than 2000 nodes/);
  });
});

describe("the compiled model", () => {
  it("Model.timeReactions lists the reactions that read t, and propensity() refuses them loudly", () => {
    const m: Model = compileModel(timed());
    expect(m.timeReactions).toEqual([0]);
    expect(compileModel(capped()).timeReactions).toEqual([]);
    expect(() => m.propensity(0, Float64Array.from([0]))).toThrow(/depends on time t/);
  });
});
