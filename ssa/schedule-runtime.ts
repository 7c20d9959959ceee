/**
 * A schedule as one cell (or the mean field) lives through it: the timed changes in time order,
 * the triggered ones watching their conditions, the delayed firings waiting, and the rates in
 * force. The direct method (ssa/schedule-kernel.ts) and the ODE (ssa/ode.ts) drive the same
 * runtime, so both apply a schedule identically:
 *
 * - Everything due at a time t is applied in this order: timed changes in schedule order, then
 *   delayed firings in the order they were triggered; then the triggers are checked.
 * - A trigger fires when its condition turns from false to true (false before time 0, so a
 *   condition that holds at the start fires at 0). With no delay it is applied at once, at the
 *   same time, and the triggers are checked again (at most MAX_ROUNDS times at one instant: more
 *   means changes that set each other off forever); with a delay it is applied delay later
 *   whatever the condition does meanwhile (persistent, in SBML's terms).
 * - The stochastic kernel checks the triggers after every reaction, so a trigger fires at the
 *   first reaction after which its condition holds.
 *
 * Pure: no I/O.
 */
import { compileCondition, type ConditionEvaluator } from "./condition";
import type { CompiledChange, CompiledSchedule, Model } from "./model-core";
import { ModelInputError } from "./types";

/** Rounds of immediate firings allowed at one instant. */
export const MAX_ROUNDS = 100;
/** Firings of one cell's schedule allowed in a run (every one is a stop of the cell). */
export const MAX_FIRINGS_PER_CELL = 1_000_000;
/** Delayed firings waiting at once. */
export const MAX_PENDING = 10_000;

export class ScheduleRuntime {
  /** The model whose rates are in force. */
  phase: Model;
  /** Per schedule entry: time of its first firing in this cell (NaN: never), and how many times it fired. */
  readonly firstAt: Float64Array;
  readonly count: Float64Array;
  private k = 0;
  private pendT: number[] = [];
  private pendC: CompiledChange[] = [];
  private readonly last: Uint8Array;
  private inForce: Record<string, number> = {};
  private evals: ConditionEvaluator[] = [];
  private firings = 0;
  private readonly evalCache = new WeakMap<Model, ConditionEvaluator[]>();
  private readonly base: Model;

  /**
   * @param mode "counts": the state vector holds molecule counts (the stochastic kernels);
   *   "amounts": model amounts (the ODE). Conditions read model amounts either way.
   */
  constructor(
    base: Model,
    private readonly sch: CompiledSchedule,
    private readonly mode: "counts" | "amounts",
  ) {
    this.base = base;
    this.phase = base;
    this.firstAt = new Float64Array(sch.entries.length);
    this.count = new Float64Array(sch.entries.length);
    this.last = new Uint8Array(sch.triggers.length);
  }

  get hasTriggers(): boolean {
    return this.sch.triggers.length > 0;
  }

  /** Back to time 0 with the base rates, then everything due at 0 applied to `x` (which holds the initial state). */
  start(x: Float64Array): void {
    this.k = 0;
    this.pendT.length = 0;
    this.pendC.length = 0;
    this.last.fill(0);
    this.inForce = {};
    this.firings = 0;
    this.firstAt.fill(NaN);
    this.count.fill(0);
    this.setPhase(this.base);
    this.applyDue(x, 0);
  }

  /** Time of the next timed change or delayed firing; Infinity when none is left. */
  nextStop(): number {
    const timed = this.k < this.sch.timed.length ? this.sch.timed[this.k].at : Infinity;
    const pending = this.pendT.length > 0 ? this.pendT[0] : Infinity;
    return timed < pending ? timed : pending;
  }

  /** Applies to `x` everything due at or before `t`, then checks the triggers. */
  applyDue(x: Float64Array, t: number): void {
    const timed = this.sch.timed;
    while (this.k < timed.length && timed[this.k].at <= t) this.apply(timed[this.k++], x, t);
    while (this.pendT.length > 0 && this.pendT[0] <= t) {
      this.pendT.shift();
      this.apply(this.pendC.shift() as CompiledChange, x, t);
    }
    this.checkTriggers(x, t);
  }

  /**
   * Fires the triggers whose conditions turned true at state `x`, time `t`. Returns whether any
   * change was applied (the state or the rates may then differ: recompute the propensities).
   */
  checkTriggers(x: Float64Array, t: number): boolean {
    const triggers = this.sch.triggers;
    if (triggers.length === 0) return false;
    let applied = false;
    for (let round = 0; ; round++) {
      let fired = false;
      for (let q = 0; q < triggers.length; q++) {
        const now = this.evals[q](x);
        if (!now) {
          this.last[q] = 0;
          continue;
        }
        if (this.last[q]) continue;
        this.last[q] = 1;
        const trig = triggers[q];
        const delay = (trig.when as NonNullable<CompiledChange["when"]>).delay;
        if (delay === 0) {
          this.apply(trig, x, t);
          fired = applied = true;
        } else this.enqueue(t + delay, trig);
      }
      if (!fired) return applied;
      if (round + 1 >= MAX_ROUNDS) {
        throw new ModelInputError(`schedule: triggered changes set each other off more than ${MAX_ROUNDS} times at time ${t}; their conditions and what they set form a loop`);
      }
    }
  }

  /** Whether some trigger would fire at state `y` (its condition false so far and true there); changes nothing. */
  wouldFire(y: Float64Array): boolean {
    for (let q = 0; q < this.evals.length; q++) if (!this.last[q] && this.evals[q](y)) return true;
    return false;
  }

  /** Notes the conditions at state `y` without firing anything (every condition found true there must already have fired). */
  observe(y: Float64Array): void {
    for (let q = 0; q < this.evals.length; q++) this.last[q] = this.evals[q](y) ? 1 : 0;
  }

  private enqueue(t: number, c: CompiledChange): void {
    if (this.pendT.length >= MAX_PENDING) throw new ModelInputError(`schedule[${c.index}].delay: more than ${MAX_PENDING} delayed firings wait at once; the condition turns true far more often than the delay allows`);
    let i = this.pendT.length;
    while (i > 0 && this.pendT[i - 1] > t) i--; // after every firing due at or before t: first triggered, first applied
    this.pendT.splice(i, 0, t);
    this.pendC.splice(i, 0, c);
  }

  private apply(c: CompiledChange, x: Float64Array, t: number): void {
    const values = this.mode === "counts" ? c.counts : c.amounts;
    for (let p = 0; p < c.species.length; p++) x[c.species[p]] = values[p];
    if (Object.keys(c.parameters).length > 0) {
      this.inForce = { ...this.inForce, ...c.parameters };
      this.setPhase(this.sch.phaseFor(this.inForce));
    }
    if (this.count[c.index]++ === 0) this.firstAt[c.index] = t;
    if (++this.firings > MAX_FIRINGS_PER_CELL) {
      throw new ModelInputError(`schedule[${c.index}]: more than ${MAX_FIRINGS_PER_CELL} changes fired in one cell; the triggered changes may set each other off`);
    }
  }

  private setPhase(phase: Model): void {
    this.phase = phase;
    let evals = this.evalCache.get(phase);
    if (!evals) {
      const scale = this.mode === "counts" ? 1 / phase.omega : 1;
      evals = this.sch.triggers.map((c) => compileCondition((c.when as NonNullable<CompiledChange["when"]>).condition, phase.speciesIndex, phase.parameters, scale));
      this.evalCache.set(phase, evals);
    }
    this.evals = evals;
  }
}
