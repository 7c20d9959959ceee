/**
 * The direct method (Gillespie 1977) for a circuit with a schedule of timed changes: the same
 * one-cell kernel signature as ssa/kernel.ts, used only when the schedule is not empty, so the
 * kernels of schedule-free circuits keep their bytes. A change is a hard stop: when the next
 * reaction would come at or after the change's time, no reaction fires; the cell's state is
 * sampled up to that time, the change is applied at exactly that time (species set to their new
 * counts, rates switched to the next phase's), every propensity is recomputed, and a fresh
 * waiting time is drawn from there. Redrawing is exact because the rates are constant between
 * changes and the waiting times of the direct method are exponential, hence memoryless
 * (Gillespie 1977). Samples are right-continuous: a grid point at a
 * change's time shows the state after it. The stream is the cell's own (seed, index), so a
 * replayed cell matches the ensemble's for any threads. Pure: no I/O.
 */
import type { KernelFn, Model } from "./model-core";
import { DirectRng } from "./rng";

/** The scheduled direct-method kernel of `m` (m.schedule must be set). */
export function scheduledDirectKernel(m: Model): KernelFn {
  const sch = m.schedule;
  if (!sch) throw new RangeError("scheduledDirectKernel: the model has no schedule");
  const { changes, phases } = sch;
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const a = new Float64Array(nR);
  return (x, rs, grid, nGrid, out, o, B, maxEvents) => {
    const rng = new DirectRng(rs);
    let k = 0;
    let phase = phases[0];
    let tE = changes.length > 0 ? changes[0].at : Infinity;
    const apply = () => {
      const ch = changes[k];
      for (let p = 0; p < ch.species.length; p++) x[ch.species[p]] = ch.counts[p];
      k++;
      phase = phases[k];
      tE = k < changes.length ? changes[k].at : Infinity;
    };
    let t = 0;
    while (tE <= t) apply(); // changes at time 0 come before the first sample
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
        // The change comes first (a tie goes to the change): sample up to it, apply it, redraw.
        while (tg < tE) {
          for (let i = 0; i < nS; i++) out[o + i * B] = x[i];
          o += nS * B;
          if (++g === nGrid) return events;
          tg = grid[g];
        }
        t = tE;
        while (tE === t) apply(); // several changes at one time, in their order
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
      }
      if (++events > maxEvents) return -1;
    }
  };
}
