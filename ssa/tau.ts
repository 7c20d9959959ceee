/**
 * Tau-leaping with the step selection of Cao, Gillespie & Petzold 2006 (J Chem Phys 124:044109,
 * "Efficient step size selection for the tau-leaping simulation method"), for one cell on a grid.
 *
 * Per step: propensities a_j(x); critical reactions are those within n_c = 10 firings of exhausting
 * a reactant (eq. 29 ff.); τ' from the bounds on the expected change μ̂_i and variance σ̂²_i of each
 * species read by a propensity, max(ε·x_i/g_i, 1) (eq. 33; ε defaults to TAU_EPSILON = 0.05, chosen by
 * measurement, where the paper suggests 0.03; see ssa/types.ts); when τ' < 10/a0 the method
 * takes 100 direct-method steps instead; τ'' ~ Exp(Σ critical a_j) decides whether one critical
 * reaction fires; non-critical reactions fire Poisson(a_j·τ) times; a step that drives a count
 * negative is rejected and τ' halved. Leaps stop at grid times so that samples are exact leap states.
 *
 * g_i follows the paper for mass action (highest order of a reaction consuming species i). For a
 * species read by a Hill law we use g_i ≥ the Hill function's local log-sensitivity n·(1−h⁺) or n·h⁺,
 * which bounds the relative change of that propensity the same way (our extension, stated here), and
 * g_i ≥ 1 for species read by a formula.
 *
 * One more bound, also ours: τ' ≤ ε / ‖J‖∞, with J the Jacobian of the drift S·a(x) (finite
 * differences of one molecule). Explicit leaps are accurate only for τ small against the fastest
 * relaxation time (Rathinam, Petzold, Cao & Gillespie 2003, J Chem Phys 119:12784); near a steady
 * state the drift μ̂ vanishes and eq. 33 alone allows leaps as long as a relaxation time, which
 * inflates the stationary variance (measured here: Fano 1.59 instead of 1 for birth–death at 2,000
 * molecules). With the bound the variance error is of order ε/2. Pure: no I/O.
 */
import type { DirectKernel } from "./kernel";
import { LawCode, hillActivation, type Model } from "./model-core";
import { poisson } from "./poisson";
import { CellRng } from "./rng";
import { ScheduleRuntime } from "./schedule-runtime";
import { TAU_EPSILON } from "./types";
export { MAX_TAU_EPSILON, TAU_EPSILON } from "./types";

/** Critical-reaction threshold n_c (paper: 10). */
export const N_CRITICAL = 10;
/** Take direct steps when τ' < SSA_FACTOR / a0 (paper: 10). */
export const SSA_FACTOR = 10;
/** Direct steps taken in that case (paper: 100). */
export const SSA_STEPS = 100;

export interface TauOptions {
  epsilon?: number;
}

/**
 * Tau-leaping kernel with the DirectKernel contract (events = reactions fired, summed over leaps).
 * With a schedule (ssa/schedule-runtime.ts) a timed change or delayed firing is a hard stop of a
 * leap, as a grid time is, and of the direct steps; the triggers are checked after every leap and
 * every direct step, so a triggered change fires at the end of the leap in which its condition
 * became true (at most that leap late; the run says so in a warning). The runtime is exposed as
 * `.runtime` to read what fired in the cell just run.
 */
export function tauKernel(m: Model, opts: TauOptions = {}): DirectKernel & { runtime?: ScheduleRuntime } {
  const eps = opts.epsilon ?? TAU_EPSILON;
  const rt = m.schedule ? new ScheduleRuntime(m, m.schedule, "counts") : null;
  const watch = rt?.hasTriggers ?? false;
  /** The model whose rates are in force (m itself without a schedule). */
  let ph: Model = m;
  const nS = m.nSpecies;
  const nR = m.nReactions;
  const a = new Float64Array(nR);
  const fired = new Float64Array(nR);
  const critical = new Uint8Array(nR);
  const xNew = new Float64Array(nS);
  const mu = new Float64Array(nS);
  const sigma2 = new Float64Array(nS);
  const g = new Float64Array(nS);
  const jac = new Float64Array(nS * nS);
  const xPlus = new Float64Array(nS);

  // Species read by some propensity: CGP's I_rs, widened to Hill inputs and formula species.
  const isRead = new Uint8Array(nS);
  for (let p = 0; p < m.readsIdx.length; p++) isRead[m.readsIdx[p]] = 1;

  /** g_i of eq. 27 ff. at the current counts, with the Hill extension of the file header. */
  const computeG = (x: Float64Array): void => {
    g.fill(0);
    for (let j = 0; j < nR; j++) {
      const order = m.reactantOrder[j];
      for (let p = m.reactantPtr[j]; p < m.reactantPtr[j + 1]; p++) {
        const i = m.reactantIdx[p];
        const nu = m.reactantNu[p];
        const xi = x[i];
        let gi: number;
        if (m.law[j] !== LawCode.MassAction || order <= 1) gi = 1;
        else if (order === 2) gi = nu === 1 ? 2 : 2 + 1 / Math.max(1, xi - 1);
        else if (nu === 1) gi = order;
        else if (order === 3 && nu === 2) gi = 1.5 * (2 + 1 / Math.max(1, xi - 1));
        else if (order === 3 && nu === 3) gi = 3 + 1 / Math.max(1, xi - 1) + 2 / Math.max(1, xi - 2);
        else gi = order + nu; // beyond the paper's table: a conservative bound
        if (gi > g[i]) g[i] = gi;
      }
      if (m.law[j] === LawCode.HillActivation || m.law[j] === LawCode.HillRepression) {
        const i = m.hillInput[j];
        const hp = hillActivation(x[i], ph.K[j] * ph.omega, ph.n[j]);
        const s = m.law[j] === LawCode.HillActivation ? ph.n[j] * (1 - hp) : ph.n[j] * hp;
        if (Math.max(1, s) > g[i]) g[i] = Math.max(1, s);
      }
    }
    for (let i = 0; i < nS; i++) if (isRead[i] && g[i] === 0) g[i] = 1;
  };

  /** ‖J‖∞ of the drift Σ_j ν_j a_j(x), by one-molecule differences of each propensity in each species it reads. */
  const driftJacobianNorm = (x: Float64Array): number => {
    jac.fill(0);
    xPlus.set(x);
    for (let j = 0; j < nR; j++) {
      const aj = a[j];
      for (let p = m.readsPtr[j]; p < m.readsPtr[j + 1]; p++) {
        const k = m.readsIdx[p];
        xPlus[k] = x[k] + 1;
        const d = ph.propensity(j, xPlus) - aj;
        xPlus[k] = x[k];
        if (d === 0) continue;
        for (let q = m.changePtr[j]; q < m.changePtr[j + 1]; q++) jac[m.changeIdx[q] * nS + k] += m.changeDelta[q] * d;
      }
    }
    let norm = 0;
    for (let i = 0; i < nS; i++) {
      let row = 0;
      for (let k = 0; k < nS; k++) row += Math.abs(jac[i * nS + k]);
      if (row > norm) norm = row;
    }
    return norm;
  };

  const kernel: DirectKernel = (x, rs, grid, nGrid, out, o, B, maxEvents) => {
    const rng = new CellRng(rs);
    let t = 0;
    let gi = 0;
    let tg = grid[0];
    let events = 0;
    let tStop = Infinity;
    if (rt) {
      rt.start(x); // changes due at time 0 come before the first sample
      ph = rt.phase;
      tStop = rt.nextStop();
    }
    /** After a change or a reaction: apply what is due at t, fire what turned true. */
    const schedule = (due: boolean): void => {
      if (!rt) return;
      if (due) rt.applyDue(x, t);
      else if (watch) rt.checkTriggers(x, t);
      ph = rt.phase;
      tStop = rt.nextStop();
    };
    const record = (): boolean => {
      for (let i = 0; i < nS; i++) out[o + i * B] = x[i];
      o += nS * B;
      gi++;
      tg = grid[gi];
      return gi === nGrid;
    };
    // The sample at t = 0 is the initial state.
    if (record()) return 0;
    let tauPrime = Infinity;
    for (;;) {
      ph.propensities(x, a);
      let a0 = 0;
      for (let j = 0; j < nR; j++) a0 += a[j];
      if (!(a0 > 0)) {
        if (tStop !== Infinity) {
          // nothing can fire until the next change: hold the state to it
          while (tg < tStop) if (record()) return events;
          t = tStop;
          schedule(true);
          while (tg <= t) if (record()) return events;
          continue;
        }
        while (!record()) { /* nothing can fire: the state holds to the end */ }
        return events;
      }
      // Critical reactions: L_j = min over consumed species of ⌊x_i / |ν_ij|⌋ < n_c.
      let a0c = 0;
      for (let j = 0; j < nR; j++) {
        critical[j] = 0;
        if (!(a[j] > 0)) continue;
        for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) {
          const d = m.changeDelta[p];
          if (d < 0 && Math.floor(x[m.changeIdx[p]] / -d) < N_CRITICAL) {
            critical[j] = 1;
            a0c += a[j];
            break;
          }
        }
      }
      // τ' (eq. 33) over non-critical reactions.
      computeG(x);
      mu.fill(0);
      sigma2.fill(0);
      for (let j = 0; j < nR; j++) {
        if (critical[j] || !(a[j] > 0)) continue;
        for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) {
          const d = m.changeDelta[p];
          mu[m.changeIdx[p]] += d * a[j];
          sigma2[m.changeIdx[p]] += d * d * a[j];
        }
      }
      tauPrime = Infinity;
      for (let i = 0; i < nS; i++) {
        if (!isRead[i]) continue;
        const bound = Math.max((eps * x[i]) / g[i], 1);
        if (mu[i] !== 0) tauPrime = Math.min(tauPrime, bound / Math.abs(mu[i]));
        if (sigma2[i] > 0) tauPrime = Math.min(tauPrime, (bound * bound) / sigma2[i]);
      }
      const jn = driftJacobianNorm(x);
      if (jn > 0) tauPrime = Math.min(tauPrime, eps / jn);

      if (tauPrime < SSA_FACTOR / a0) {
        // Direct-method steps (paper step 4); samples follow the direct-method rule.
        for (let step = 0; step < SSA_STEPS; step++) {
          if (step > 0) {
            ph.propensities(x, a);
            a0 = 0;
            for (let j = 0; j < nR; j++) a0 += a[j];
          }
          const tNext = a0 > 0 ? t - Math.log(rng.uniformPositive()) / a0 : Infinity;
          if (tNext >= tStop) {
            // The change comes first (a tie goes to the change): sample up to it, apply it.
            while (tg < tStop) if (record()) return events;
            t = tStop;
            schedule(true);
            break;
          }
          while (tg < tNext) if (record()) return events;
          let r = rng.uniform() * a0;
          let j = 0;
          for (; j < nR - 1; j++) if ((r -= a[j]) < 0) break;
          if (a[j] > 0) {
            for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) x[m.changeIdx[p]] += m.changeDelta[p];
          }
          t = tNext;
          if (++events > maxEvents) return -1;
          if (watch) schedule(false);
        }
        continue;
      }

      // Leap, retried with τ' halved while it drives a count negative (paper step 6).
      for (;;) {
        const tauCrit = a0c > 0 ? -Math.log(rng.uniformPositive()) / a0c : Infinity;
        // A change's time is a hard stop like a grid time: the leap ends there.
        const toGrid = Math.min(tg, tStop) - t;
        let tau: number;
        let fireCritical = false;
        if (toGrid <= tauPrime && toGrid <= tauCrit) tau = toGrid;
        else if (tauPrime < tauCrit) tau = tauPrime;
        else {
          tau = tauCrit;
          fireCritical = true;
        }
        fired.fill(0);
        for (let j = 0; j < nR; j++) if (!critical[j] && a[j] > 0) fired[j] = poisson(rng, a[j] * tau);
        if (fireCritical) {
          let r = rng.uniform() * a0c;
          let jc = -1;
          for (let j = 0; j < nR; j++) {
            if (!critical[j]) continue;
            jc = j;
            if ((r -= a[j]) < 0) break;
          }
          if (jc >= 0) fired[jc] += 1;
        }
        xNew.set(x);
        let fired0 = 0;
        for (let j = 0; j < nR; j++) {
          if (fired[j] === 0) continue;
          fired0 += fired[j];
          for (let p = m.changePtr[j]; p < m.changePtr[j + 1]; p++) xNew[m.changeIdx[p]] += fired[j] * m.changeDelta[p];
        }
        let negative = false;
        for (let i = 0; i < nS; i++) if (xNew[i] < 0) negative = true;
        if (negative) {
          tauPrime = tau / 2;
          continue;
        }
        x.set(xNew);
        const atStop = tau === toGrid;
        t = atStop ? Math.min(tg, tStop) : t + tau;
        events += fired0;
        if (events > maxEvents) return -1;
        // The grid point at a change's time shows the state after it (right-continuous), and
        // the state a leap reached is sampled before a change at the same time is applied.
        if (atStop && t === tStop) {
          while (tg < t) if (record()) return events;
          schedule(true);
        } else if (watch) schedule(false);
        break;
      }
      while (tg <= t) if (record()) return events;
    }
  };
  return rt ? Object.assign(kernel, { runtime: rt }) : kernel;
}
