/**
 * Schedules of timed changes (circuit format /2): the induction step on the two-stage reporter
 * against the closed-form relaxation of a linear cascade, for the ODE and for the direct method
 * (z-scores over cells, fixed seeds); a species set; the same bytes for any threads and for a
 * replayed cell; and the schema's refusals, each naming the field.
 *
 * The closed form: after km steps from km0 to km1 at time T, with M and P at the old steady state
 * M0 = km0/gm, P0 = kp·M0/gp, the means obey dM/dt = km1 − gm·M, dP/dt = kp·M − gp·P (linear, so
 * the stochastic mean equals the mean field exactly), giving, with τ = t − T and ΔM = M0 − M1:
 *   M(τ) = M1 + ΔM·e^(−gm·τ),
 *   P(τ) = P1 + (P0 − P1)·e^(−gp·τ) + kp·ΔM/(gp − gm)·(e^(−gm·τ) − e^(−gp·τ)),
 * M1 = km1/gm, P1 = kp·M1/gp. The protein's approach is set by its loss rate gp (Alon, An
 * Introduction to Systems Biology, 2006, ch. 2: response time ln 2/α; from memory).
 */
import { readFileSync } from "node:fs";

import { describe, expect, it } from "vitest";

import { parseCircuit } from "@/lib/schemas/circuit";
import { simulateCells, summarize, trajectory, type EnsembleOptions } from "@/ssa/ensemble";
import { compileModel } from "@/ssa/model";
import { simulateRun } from "@/ssa/node/run-engine";
import { solveOde } from "@/ssa/ode";
import type { Circuit } from "@/ssa/types";

const json = () => JSON.parse(readFileSync("examples/two-stage-reporter-induction.circuit.json", "utf8"));
const induced = parseCircuit(json());
const [km0, km1, gm, kp, gp, T] = [0.2, 2, 0.2, 2, 0.02, 100];

function closedForm(t: number): { M: number; P: number } {
  const M0 = km0 / gm;
  const P0 = (kp * M0) / gp;
  if (t < T) return { M: M0, P: P0 };
  const tau = t - T;
  const M1 = km1 / gm;
  const P1 = (kp * M1) / gp;
  const dM = M0 - M1;
  return {
    M: M1 + dM * Math.exp(-gm * tau),
    P: P1 + (P0 - P1) * Math.exp(-gp * tau) + ((kp * dM) / (gp - gm)) * (Math.exp(-gm * tau) - Math.exp(-gp * tau)),
  };
}

describe("schedule: induction step on the two-stage reporter", () => {
  it("the ODE follows the closed-form relaxation, flat before the step (hard stop at t = 100)", () => {
    const s = solveOde(compileModel(induced), { tEnd: 400, dt: 5 });
    s.times.forEach((t, g) => {
      const want = closedForm(t);
      expect(s.trace.M[g]).toBeCloseTo(want.M, 4);
      expect(Math.abs(s.trace.P[g] - want.P) / want.P).toBeLessThan(1e-5);
    });
    // A step the integrator did not stop at would smear t = 100..105; the closed form pins it.
    expect(s.trace.P[s.times.indexOf(100)]).toBeCloseTo(100, 6);
  });

  it("the direct method's ensemble mean follows the same curve, |z| <= 4 at every checked time (600 cells, seed 11)", () => {
    const m = compileModel(induced);
    const o: EnsembleOptions = { method: "ssa", tEnd: 400, dt: 25, seed: 11, burnIn: 0 };
    const s = summarize(m, o, simulateCells(m, o, 0, 600));
    const n = 600;
    const zs: number[] = [];
    s.times.forEach((t, g) => {
      if (t === 0) return;
      for (const id of ["M", "P"] as const) {
        const want = closedForm(t)[id];
        const z = (s.mean[id][g] - want) / (s.sd[id][g] / Math.sqrt(n));
        zs.push(z);
        expect(Math.abs(z), `${id} at t = ${t}: mean ${s.mean[id][g]} vs ${want}`).toBeLessThanOrEqual(4);
      }
    });
    // The step is visible: P at 400 is far above the uninduced 100 (about 950 by the closed form).
    expect(s.mean.P[s.times.indexOf(400)]).toBeGreaterThan(800);
    expect(zs.length).toBe(32);
  });

  it("a species set at a time is what every cell shows at that grid point (right-continuous), in the ODE too", () => {
    const c: Circuit = { ...induced, schedule: [...(induced.schedule ?? []), { at: 200, set: { P: 0, M: 50 } }] };
    const m = compileModel(parseCircuit(c));
    const o: EnsembleOptions = { method: "ssa", tEnd: 300, dt: 10, seed: 3, burnIn: 0 };
    const s = summarize(m, o, simulateCells(m, o, 0, 50));
    const g = s.times.indexOf(200);
    expect(s.mean.P[g]).toBe(0);
    expect(s.sd.P[g]).toBe(0);
    expect(s.mean.M[g]).toBe(50);
    expect(s.mean.P[g + 1]).toBeGreaterThan(0);
    const ode = solveOde(m, { tEnd: 300, dt: 10 });
    expect(ode.trace.P[g]).toBe(0);
    expect(ode.trace.M[g]).toBe(50);
  });

  it("gives the same bytes for 1 and 2 threads, and a replayed cell equals that cell in the ensemble", async () => {
    const run = { method: "ssa", tEnd: 300, dt: 5, seed: 21, runs: 24, burnIn: 50 } as const;
    const stats = (x: { mean: unknown; sd: unknown; quantiles: unknown; events: number }) => JSON.stringify([x.mean, x.sd, x.quantiles, x.events]);
    const one = await simulateRun(induced, { ...run, threads: 1 });
    const two = await simulateRun(induced, { ...run, threads: 2, chunk: 5 });
    expect(stats(two)).toBe(stats(one));
    const m = compileModel(induced);
    const o: EnsembleOptions = { method: "ssa", tEnd: 300, dt: 5, seed: 21, burnIn: 50 };
    const alone = summarize(m, o, simulateCells(m, o, 7, 8));
    const replay = trajectory(m, o, 7);
    expect(replay.values.P).toEqual(alone.mean.P);
    expect(replay.values.M).toEqual(alone.mean.M);
  });

  it("the result lists the changes that fired and warns about one after burn-in and one after t_end", async () => {
    const c = parseCircuit({ ...json(), schedule: [{ at: 100, set: { km: 2 } }, { at: 150, set: { P: 10 } }, { at: 900, set: { km: 0 } }] });
    const s = await simulateRun(c, { method: "ssa", tEnd: 400, dt: 10, seed: 2, runs: 10, burnIn: 120, threads: 1 });
    expect(s.schedule).toEqual([{ index: 0, at: 100, set: { km: 2 }, cells: 10, of: 10 }, { index: 1, at: 150, set: { P: 10 }, cells: 10, of: 10 }]);
    expect(s.warnings.filter((w) => w.code.startsWith("schedule")).map((w) => [w.code, w.field])).toEqual([
      ["schedule-after-end", "schedule[2].at"],
      ["schedule-after-burn-in", "schedule"],
    ]);
    const ode = await simulateRun(c, { method: "ode", tEnd: 400, dt: 10, burnIn: 120 });
    expect(ode.schedule).toEqual(s.schedule?.map((f) => ({ ...f, cells: 1, of: 1 })));
    // A circuit without a schedule has no such key: its output bytes are as before.
    const plain = await simulateRun(parseCircuit({ ...json(), format: "burstwise.circuit/1", schedule: undefined }), { method: "ode", tEnd: 40, dt: 10 });
    expect("schedule" in plain).toBe(false);
  });

  it("tau-leaping stops a leap at the change: its ensemble mean follows the same curve, |z| <= 4 (600 cells, seed 12), and a species set shows at its grid point", () => {
    // The step at 100 falls between grid points (dt 30): a leap that ran through it would apply it late.
    const c: Circuit = { ...induced, schedule: [...(induced.schedule ?? []), { at: 210, set: { M: 50 } }] };
    const m = compileModel(parseCircuit(c));
    const o: EnsembleOptions = { method: "tau", tEnd: 240, dt: 30, seed: 12, burnIn: 0 };
    const s = summarize(m, o, simulateCells(m, o, 0, 600));
    s.times.forEach((t, g) => {
      if (t === 0 || t >= 210) return;
      const want = closedForm(t);
      const se = (s.sd.P[g] as number) / Math.sqrt(600);
      const z = ((s.mean.P[g] as number) - want.P) / se;
      expect(Math.abs(z), `P at t = ${t}: ${s.mean.P[g]} vs ${want.P}`).toBeLessThanOrEqual(4);
    });
    const g = s.times.indexOf(210);
    expect(s.mean.M[g]).toBe(50);
    expect(s.sd.M[g]).toBe(0);
  });
});

describe("schedule: a pulse on the ring timer resets its phase", () => {
  // Every cell of the 1 fL ring timer starts alike, but its period CV of about 0.22 spreads the
  // phases over a whole period within a few hundred minutes. At 300 min a pulse sets A high and B,
  // C to zero in every cell: from there all cells descend alike. The phase is read as the time
  // from a reference time t0 to the first fall of A to ≤ 2 molecules after it has been ≥ 8 since
  // t0 (a hysteresis band, so counting noise does not make crossings); before the pulse with
  // t0 = 250, after it with t0 = 300. Measured with seed 17 over 200 cells: the SD falls from
  // 7.14 min (198 cells) to 3.36 min (200 cells), z = 9.5; the test asks for SD_before − SD_after ≥ 4
  // standard errors (SE of an SD ≈ SD/√(2n), normal approximation; common practice).
  const ring = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));
  const pulsed = parseCircuit({ ...ring, format: "burstwise.circuit/2", schedule: [{ at: 300, set: { A: 40, B: 0, C: 0 } }] });

  function phaseAfter(times: number[], a: number[], t0: number): number | null {
    let armed = false;
    for (let g = 0; g < times.length; g++) {
      if (times[g] < t0) continue;
      if (a[g] >= 8) armed = true;
      else if (armed && a[g] <= 2) return times[g] - t0;
    }
    return null;
  }
  const sd = (v: number[]) => {
    const m = v.reduce((x, y) => x + y, 0) / v.length;
    return Math.sqrt(v.reduce((x, y) => x + (y - m) ** 2, 0) / (v.length - 1));
  };

  it("the cells' phases after the pulse are tighter than before (200 cells, seed 17, |z| >= 4)", () => {
    const m = compileModel(pulsed);
    const o: EnsembleOptions = { method: "ssa", tEnd: 340, dt: 0.25, seed: 17, burnIn: 0 };
    const before: number[] = [];
    const after: number[] = [];
    for (let i = 0; i < 200; i++) {
      const cell = trajectory(m, o, i);
      const b = phaseAfter(cell.times, cell.values.A, 250);
      const a = phaseAfter(cell.times, cell.values.A, 300);
      if (b !== null && b < 300 - 250) before.push(b);
      if (a !== null) after.push(a);
    }
    expect(before.length).toBeGreaterThan(180);
    expect(after.length).toBe(200);
    const [sb, sa] = [sd(before), sd(after)];
    const z = (sb - sa) / Math.sqrt(sb ** 2 / (2 * before.length) + sa ** 2 / (2 * after.length));
    expect(z, `SD before ${sb.toFixed(2)} min, after ${sa.toFixed(2)} min`).toBeGreaterThanOrEqual(4);
    // Every cell holds the pulse's state at 300 min (right-continuous samples).
    const at = trajectory(m, o, 5);
    const g = at.times.indexOf(300);
    expect([at.values.A[g], at.values.B[g], at.values.C[g]]).toEqual([Math.round(40 * m.omega), 0, 0]);
  });
});

describe("schedule: the circuit file's rules", () => {
  const refuse = (doc: unknown) => {
    try {
      parseCircuit(doc);
    } catch (e) {
      return (e as Error).message;
    }
    return "accepted";
  };

  it("reads /1 files unchanged and /2 files with a schedule", () => {
    const v1 = { ...json(), format: "burstwise.circuit/1" };
    delete v1.schedule;
    expect(parseCircuit(v1).schedule).toBeUndefined();
    expect(induced.schedule).toEqual([{ at: 100, set: { km: 2 } }]);
  });

  it("refuses each bad schedule with one line naming the field", () => {
    expect(refuse({ ...json(), format: "burstwise.circuit/1" })).toBe('schedule: needs "format": "burstwise.circuit/2" (a "burstwise.circuit/1" file has no schedule)');
    expect(refuse({ ...json(), format: "burstwise.circuit/3" })).toMatch(/^format: must be "burstwise.circuit\/1" or "burstwise.circuit\/2"/);
    expect(refuse({ ...json(), schedule: [{ at: 100, set: { IPTG: 5 } }] })).toBe('schedule[0].set.IPTG: unknown species or parameter "IPTG"');
    expect(refuse({ ...json(), schedule: [{ at: 100, set: { km: 2 } }, { at: 50, set: { km: 1 } }] })).toBe("schedule[1].at: must not be earlier than schedule[0].at (100)");
    expect(refuse({ ...json(), schedule: [{ at: -1, set: { km: 2 } }] })).toMatch(/^schedule\[0\]\.at: must be >= 0/);
    expect(refuse({ ...json(), schedule: [{ at: 10, set: {} }] })).toBe("schedule[0].set: must change at least one species or parameter");
    expect(refuse({ ...json(), schedule: [{ at: 10, set: { P: -3 } }] })).toMatch(/^schedule\[0\]\.set\.P: must be >= 0/);
    expect(refuse({ ...json(), schedule: [{ at: 10, set: { km: 2 }, when: "P > 3" }] })).toMatch(/^schedule\[0\]/);
    expect(refuse({ ...json(), schedule: Array.from({ length: 201 }, (_, k) => ({ at: k, set: { km: 1 } })) })).toMatch(/^schedule: must list at most 200 changes/);
  });

  it("refuses a parameter value that breaks a bound of a rate law that reads it", () => {
    const hill = {
      format: "burstwise.circuit/2",
      units: { time: "min", amount: "molecules" },
      species: [{ id: "X", initial: 0 }],
      parameters: { K: 10, v: 1 },
      reactions: [{ id: "make", products: { X: 1 }, rate: { law: "hill_repression", input: "X", vmax: "v", K: "K", n: 2 } }],
      schedule: [{ at: 5, set: { K: 0 } }],
    };
    expect(refuse(hill)).toBe("schedule[0].set.K: must keep reactions[0].rate.K > 0 (got 0)");
  });
});

describe("schedule: a step's time, delay and level may name a parameter (read at the start, overrides in force)", () => {
  // The same induction step with its time and level as parameters: t_on = 100, km_on = 2.
  const named = () => {
    const doc = json();
    doc.parameters = { ...doc.parameters, t_on: 100, km_on: 2 };
    doc.schedule = [{ at: "t_on", set: { km: "km_on" } }];
    return doc;
  };

  it("gives the same ODE trace as the literal step, and an override moves the step's time and level", () => {
    const literal = solveOde(compileModel(induced), { tEnd: 400, dt: 5 });
    const viaParams = solveOde(compileModel(parseCircuit(named())), { tEnd: 400, dt: 5 });
    expect(viaParams.trace.P).toEqual(literal.trace.P);
    // Moved to t = 160 with km_on = 4: flat at P0 = 100 until 160, then the closed form with
    // km1 = 4 from there (same linear cascade; see the header of this file).
    const moved = solveOde(compileModel(parseCircuit(named()), { t_on: 160, km_on: 4 }), { tEnd: 400, dt: 5 });
    const M0 = km0 / gm;
    const M1 = 4 / gm;
    const [P0, P1] = [(kp * M0) / gp, (kp * M1) / gp];
    moved.times.forEach((t, g) => {
      if (t <= 160) return expect(moved.trace.P[g]).toBeCloseTo(P0, 6);
      const tau = t - 160;
      const want = P1 + (P0 - P1) * Math.exp(-gp * tau) + ((kp * (M0 - M1)) / (gp - gm)) * (Math.exp(-gm * tau) - Math.exp(-gp * tau));
      expect(Math.abs(moved.trace.P[g] - want) / want).toBeLessThan(1e-5);
    });
  });

  it("a triggered change's delay may name a parameter", () => {
    const doc = json();
    doc.parameters = { ...doc.parameters, lag: 30 };
    doc.schedule = [{ when: "P > 150", delay: "lag", set: { km: 0 } }];
    const m = compileModel(parseCircuit(doc));
    expect(m.schedule?.entries[0].when?.delay).toBe(30);
    expect(compileModel(parseCircuit(doc), { lag: 5 }).schedule?.entries[0].when?.delay).toBe(5);
  });

  it("refuses a name that is not a parameter, or a value out of range, naming the field", () => {
    const refuse = (doc: unknown, overrides?: Record<string, number>) => {
      try {
        compileModel(parseCircuit(doc), overrides);
      } catch (e) {
        return (e as Error).message;
      }
      return "accepted";
    };
    expect(refuse({ ...named(), schedule: [{ at: "t_off", set: { km: 2 } }] })).toBe('schedule[0].at: unknown parameter "t_off"');
    expect(refuse({ ...named(), schedule: [{ at: "P", set: { km: 2 } }] })).toBe('schedule[0].at: "P" is a species, not a parameter');
    expect(refuse({ ...named(), schedule: [{ at: 10, set: { km: "nope" } }] })).toBe('schedule[0].set.km: unknown parameter "nope"');
    expect(refuse({ ...named(), parameters: { ...named().parameters, t_on: -1 } })).toBe('schedule[0].at: must be >= 0 (parameter "t_on" is -1)');
    expect(refuse({ ...named(), schedule: [{ at: 200, set: { km: 1 } }, { at: "t_on", set: { km: 2 } }] })).toBe("schedule[1].at: must not be earlier than schedule[0].at (200)");
    // A value checked against the bounds of the rate laws that read the parameter set.
    expect(refuse({ ...named(), parameters: { ...named().parameters, km_on: -2 } })).toBe('schedule[0].set.km: must be >= 0 (parameter "km_on" is -2)');
    // An override is checked when the model is compiled for the run.
    expect(refuse(named(), { t_on: -5 })).toBe('schedule[0].at: must be a number >= 0 (parameter "t_on" is -5)');
    expect(refuse(named(), { t_on: 160 })).toBe("accepted");
  });
});

