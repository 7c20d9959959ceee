/**
 * What a run reports about a circuit's schedule: each change that fired within [0, t_end], with
 * what it set (model units), in how many cells, and for a triggered change when it first fired
 * across cells (mean with a 95% interval over cells, SD, median, range); and the caveats that
 * come with them: a change after the burn-in mixes two regimes into the stationary statistics, a
 * timed change after t_end never fires, a triggered one that fired in no cell. Pure: no I/O.
 */
import type { Model } from "./model-core";
import { quantileSorted } from "./stats";
import { makeWarning, type EngineWarning } from "./warnings";


/** When a triggered change first fired, over the cells in which it fired (model time unit). */
export interface FirstFiring {
  mean: number;
  /** 95% interval of the mean over cells (Student t; null for a single cell). */
  ci: [number, number] | null;
  sd: number;
  median: number;
  min: number;
  max: number;
}

/** One change as a result reports it. */
export interface FiredChange {
  /** Position in the circuit's schedule. */
  index: number;
  /** A timed change: its time. */
  at?: number;
  /** A triggered change: its condition and delay. */
  when?: string;
  delay?: number;
  /** What it set: species amounts and parameter values, model units. */
  set: Record<string, number>;
  /** Cells in which it fired at least once, of `of`. */
  cells: number;
  of: number;
  /** A triggered change: when it first fired (null when it fired in no cell), and its firings per cell on average. */
  first_at?: FirstFiring | null;
  firings_per_cell?: number;
}

/** What the cells' schedules did: per cell c and entry e, firstAt[c·E + e] (NaN: never) and count[c·E + e]. */
export interface FiringRecord {
  cells: number;
  firstAt: Float64Array;
  count: Float64Array;
}

/**
 * Student t quantile for ν degrees of freedom from the normal one, by the Cornish–Fisher
 * expansion (Abramowitz & Stegun 1964, 26.7.5); within 0.3% of the exact 97.5% point for ν ≥ 3.
 */
export function tQuantile975(nu: number): number {
  const z = 1.959963984540054;
  if (!(nu >= 1)) return NaN;
  if (nu === 1) return 12.706204736174707;
  if (nu === 2) return 4.302652729749464;
  const z3 = z ** 3;
  const z5 = z ** 5;
  const z7 = z ** 7;
  return z + (z3 + z) / (4 * nu) + (5 * z5 + 16 * z3 + 3 * z) / (96 * nu ** 2) + (3 * z7 + 19 * z5 + 17 * z3 - 15 * z) / (384 * nu ** 3);
}

function firstFiring(times: number[]): FirstFiring | null {
  const n = times.length;
  if (n === 0) return null;
  const sorted = [...times].sort((a, b) => a - b);
  let mean = 0;
  for (const t of times) mean += t;
  mean /= n;
  let ss = 0;
  for (const t of times) ss += (t - mean) ** 2;
  const sd = n > 1 ? Math.sqrt(ss / (n - 1)) : 0;
  const half = n > 1 ? tQuantile975(n - 1) * (sd / Math.sqrt(n)) : NaN;
  return { mean, ci: n > 1 ? [mean - half, mean + half] : null, sd, median: quantileSorted(sorted, 0.5), min: sorted[0], max: sorted[n - 1] };
}

/**
 * The schedule's report for a run of `m` over [0, tEnd]; `record` says what fired in each cell
 * (without it, as for a schedule with timed changes only, every timed change within tEnd fired
 * in every one of `cells` cells).
 */
export function scheduleReport(m: Model, o: { tEnd: number; burnIn: number; cells?: number; method?: string }, record?: FiringRecord): { fired: FiredChange[]; warnings: EngineWarning[] } {
  const fired: FiredChange[] = [];
  const warnings: EngineWarning[] = [];
  const sch = m.schedule;
  if (!sch) return { fired, warnings };
  const unit = m.timeUnit;
  const E = sch.entries.length;
  const cells = record?.cells ?? o.cells ?? 1;
  const late: string[] = [];
  for (const ch of sch.entries) {
    const k = ch.index;
    const set: Record<string, number> = {};
    for (let p = 0; p < ch.species.length; p++) set[m.species[ch.species[p]]] = ch.amounts[p];
    Object.assign(set, ch.parameters);
    if (!ch.when) {
      if (ch.at > o.tEnd) {
        warnings.push(makeWarning("schedule-after-end", `schedule[${k}]: the change at ${ch.at} ${unit} lies after t_end = ${o.tEnd} ${unit} and never fires; raise t_end to see it.`, `schedule[${k}].at`));
        continue;
      }
      fired.push({ index: k, at: ch.at, set, cells, of: cells });
      if (ch.at > o.burnIn) late.push(`${ch.at} ${unit}`);
      continue;
    }
    const times: number[] = [];
    let firings = 0;
    if (record) {
      for (let c = 0; c < record.cells; c++) {
        const n = record.count[c * E + k];
        firings += n;
        if (n > 0) times.push(record.firstAt[c * E + k]);
      }
    }
    const first = firstFiring(times);
    fired.push({ index: k, when: ch.when.source, delay: ch.when.delay, set, cells: times.length, of: cells, first_at: first, firings_per_cell: cells > 0 ? firings / cells : 0 });
    if (times.length === 0) {
      warnings.push(makeWarning("schedule-never-fired", `schedule[${k}].when: "${ch.when.source}" never turned true within t_end = ${o.tEnd} ${unit} in any cell${ch.when.delay > 0 ? ` early enough for its delay of ${ch.when.delay} ${unit}` : ""}; the change it sets never happened.`, `schedule[${k}].when`));
    } else if (first && first.max > o.burnIn) late.push(`when ${ch.when.source} (first fired up to ${round(first.max)} ${unit})`);
  }
  if (o.method === "tau" && sch.triggers.length > 0) {
    const fields = sch.triggers.map((c) => `schedule[${c.index}].when`);
    warnings.push(
      makeWarning(
        "schedule-trigger-after-leap",
        `${fields.join(", ")}: tau-leaping checks a condition after each leap, so a triggered change fires at the end of the leap in which its condition became true, up to one leap late (the direct method fires it at the reaction that makes it true); use "ssa" where the firing time matters.`,
        fields[0],
      ),
    );
  }
  if (late.length > 0) {
    warnings.push(
      makeWarning(
        "schedule-after-burn-in",
        `schedule: ${late.length === 1 ? "the change" : `${late.length} changes`} at ${late.join(", ")} ${late.length === 1 ? "falls" : "fall"} after burn-in ${o.burnIn} ${unit}, so the stationary statistics and periods pool samples from before and after ${late.length === 1 ? "it" : "them"}; read the mean and quantile paths, or set burn_in after the last change.`,
        "schedule",
      ),
    );
  }
  return { fired, warnings };
}

const round = (x: number) => Math.round(x * 1000) / 1000;
