/**
 * The direct method (Gillespie 1977) for a circuit with a schedule: the same one-cell kernel
 * signature as ssa/kernel.ts, used only when the schedule is not empty, so the kernels of
 * schedule-free circuits keep their bytes. The schedule is walked by ssa/schedule-runtime.ts.
 *
 * A timed change or a delayed firing is a hard stop: when the next reaction would come at or
 * after its time, no reaction fires; the cell's state is sampled up to that time, the change is
 * applied at exactly that time, every propensity is recomputed, and a fresh waiting time is drawn
 * from there. Redrawing is exact because the rates are constant between stops and the waiting
 * times of the direct method are exponential, hence memoryless (Gillespie 1977). After every
 * reaction the triggers are checked, so a triggered change fires at the first reaction after
 * which its condition holds, at that reaction's time. Samples are right-continuous: a grid point
 * at a change's time shows the state after it. The stream is the cell's own (seed, index), so a
 * replayed cell matches the ensemble's for any threads. Pure: no I/O.
 */
import type { KernelFn, Model } from "./model-core";
import { DirectRng } from "./rng";
import { ScheduleRuntime } from "./schedule-runtime";

/** A kernel that also tells what the schedule did in the cell it last ran (read after each call). */
export type ScheduledKernelFn = KernelFn & { runtime: ScheduleRuntime };

/** The scheduled direct-method kernel of `m` (m.schedule must be set). */
export function scheduledDirectKernel(m: Model): ScheduledKernelFn {
  const sch = m.schedule;
  if (!sch) throw new RangeError("scheduledDirectKernel: the model has no schedule");
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const a = new Float64Array(nR);
  const rt = new ScheduleRuntime(m, sch, "counts");
  const watch = rt.hasTriggers;
  const fn: KernelFn = (x, rs, grid, nGrid, out, o, B, maxEvents) => {
    const rng = new DirectRng(rs);
    let t = 0;
    rt.start(x); // changes due at time 0 come before the first sample
    let phase = rt.phase;
    let tE = rt.nextStop();
    phase.propensities(x, a);
    let g = 0;
    let tg = grid[0];
    let events = 0;
    for (;;) {
      let asum = 0;
      for (let j = 0; j < nR; j++) asum += a[j];
      const e = rng.exponential();
      const next = asum > 0 ? t + e / asum : Infinity;
      if (tE !== Infinity && next >= tE) {
        // The stop comes first (a tie goes to the stop): sample up to it, apply it, redraw.
        while (tg < tE) {
          for (let i = 0; i < nS; i++) out[o + i * B] = x[i];
          o += nS * B;
          if (++g === nGrid) return events;
          tg = grid[g];
        }
        t = tE;
        rt.applyDue(x, t);
        phase = rt.phase;
        tE = rt.nextStop();
        phase.propensities(x, a);
        continue;
      }
      t = next;
      while (tg < t) {
        for (let i = 0; i < nS; i++) out[o + i * B] = x[i];
        o += nS * B;
        if (++g === nGrid) return events;
        tg = grid[g];
      }
      let r = rng.uniform() * asum;
      let j = 0;
      for (; j < nR - 1; j++) if ((r -= a[j]) < 0) break;
      if (j === nR - 1 && !(a[j] > 0)) {
        // round-off left r past the last positive propensity: no event (probability ~1e−16)
      } else {
        for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) x[m.changeIdx[p]] += m.changeDelta[p];
        for (let p = m.depPtr[j]; p < m.depPtr[j + 1]; p++) a[m.depIdx[p]] = phase.propensity(m.depIdx[p], x);
        if (watch && rt.checkTriggers(x, t)) {
          phase = rt.phase;
          tE = rt.nextStop();
          phase.propensities(x, a);
        } else if (watch) tE = rt.nextStop(); // a delayed firing may have been queued
      }
      if (++events > maxEvents) return -1;
    }
  };
  return Object.assign(fn, { runtime: rt });
}
