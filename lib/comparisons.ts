import { requireLabRole, type Action } from "@/lib/access";
import type {
  ComparisonBandsJson, ComparisonJson, ComparisonResultsJson, DesignResultJson, DifferenceTestJson, IntervalJson, LnaCurveJson, SpeciesNoiseJson,
} from "@/lib/view/comparison-view";
import { MODEL_CAVEAT, comparisonProgress } from "@/lib/view/comparison-view";
import {
  cancelComparisonRuns, cancelDesignRuns, deleteComparison, endComparison, getComparison, getComparisonIdOfRun, getRunCellStats, getRunCellStatsGz, getRunNoise, getRunWarnings,
  insertComparison, insertDesignRuns, listDesigns, storeComparisonResults, getComparisonResults,
  type ComparisonRow, type DesignRow, type NewDesign,
} from "@/lib/data/comparisons";
import { getVersion, type VersionRow } from "@/lib/data/circuits";
import { getComparisonTest, putComparisonTest, type ComparisonTestKey } from "@/lib/data/comparison-tests";
import type { AuditEventInput } from "@/lib/data/audit";
import { failRun, getQueuedWork, getRun, getRunSummaryParts, type QueuedWork } from "@/lib/data/runs";
import { requireVersion } from "@/lib/data/version-access";
import { runEngineTask } from "@/lib/engine";
import { env } from "@/lib/env";
import { conflict, HttpError, idParam, notFound, unprocessable } from "@/lib/http";
import { getSender, Queues, type ComparisonFinishJob, type RunChunkJob } from "@/lib/jobs";
import { estimateRunWork, getRunBudget, requireFitsBudget, requireQueueRoom, type RunBudget } from "@/lib/run-budget";
import { drawSeed, launchCostJson, launchedEvent, requireStochasticRates, type LaunchCost } from "@/lib/runs";
import { checkOverrides, CircuitError } from "@/lib/schemas/circuit";
import { COMPARISON_LIMITS, axisValues, sweepDesigns, type ComparisonCreate, type Sweep } from "@/lib/schemas/comparisons";
import { RUN_LIMITS } from "@/lib/schemas/runs";
import { settingsOf } from "@/lib/schemas/run-options";
import { bootstrapNoise, type DifferenceTest, type Interval } from "@/ssa/bootstrap";
import { decodeCellStats, type CellStats } from "@/ssa/cell-stats";
import { predictLna } from "@/ssa/lna-prediction";
import { ENGINE_VERSION } from "@/ssa/version";

/** Two-sided level of the difference test. */
const TEST_ALPHA = 0.05;
/** Points of the LNA curve along a sweep's first axis (fewer per line for a grid). */
const LNA_CURVE_POINTS = 41;

/**
 * The comparison named by a URL segment, when the user may do `action` in its lab.
 * @throws 404 for a bad id, a missing comparison or one in another lab; 403 for the role.
 */
export async function requireComparison(userId: string, rawId: string | undefined, action: Action = "lab:read"): Promise<ComparisonRow> {
  const c = await getComparison(idParam(rawId, "comparison"));
  if (!c) throw notFound("comparison");
  await requireLabRole(userId, c.labId, action, "comparison");
  return c;
}

/** A comparison as the API shows it (`GET /api/comparisons/:id`). */
export function comparisonToJson(c: ComparisonRow, designs: DesignRow[], results: ComparisonResultsJson | null): ComparisonJson {
  const json: ComparisonJson = {
    id: c.id, lab_id: c.labId, name: c.name, description: c.description, kind: c.kind,
    sweep: (c.sweep as ComparisonJson["sweep"]) ?? null, settings: c.settings, seed: c.seed, common_seed: c.commonSeed,
    status: c.status, error: c.error, progress: 0, created_by: c.createdByEmail,
    created_at: new Date(c.createdAt).toISOString(),
    launched_at: c.launchedAt ? new Date(c.launchedAt).toISOString() : null,
    finished_at: c.finishedAt ? new Date(c.finishedAt).toISOString() : null,
    designs: designs.map((d) => ({
      id: d.id, position: d.position, label: d.label, version_id: d.versionId, circuit_id: d.circuitId, circuit_name: d.circuitName,
      version_number: d.versionNumber, overrides: d.overrides ?? {}, values: d.sweepValues,
      run: d.runId ? { id: d.runId, status: d.runStatus ?? "queued", error: d.runError, chunks_done: d.chunksDone ?? 0, chunks_total: d.chunksTotal ?? 1, seed: d.runSeed ?? 0 } : null,
    })),
    results,
    finishing: c.status === "running" && designs.length > 0 && designs.every((d) => d.runStatus === "succeeded"),
  };
  json.progress = comparisonProgress(json);
  return json;
}

/**
 * Seconds after its last design run finished before a read asks a worker to compute a
 * comparison's results: the worker's run-finished hook normally does it first; this catches a
 * missed hook (a worker that died in it).
 */
const READ_REQUESTS_AFTER_S = 15;

/**
 * The comparison with its designs and results, after reconciling it with its runs. A read never
 * computes results (seconds of engine work for large circuits, on the thread serving everyone):
 * when they are missing it queues a job for the worker and answers with `finishing: true`.
 */
export async function loadComparisonJson(c: ComparisonRow): Promise<ComparisonJson> {
  const status = c.status === "running" ? await reconcileComparisonOnRead(c.id) : c.status;
  const row = status !== c.status ? ((await getComparison(c.id)) ?? c) : c;
  const [designs, results] = await Promise.all([listDesigns(c.id), getComparisonResults<ComparisonResultsJson>(c.id)]);
  return comparisonToJson(row, designs, results);
}

/** Rewrites an override error of the circuit rules (`overrides.k: …`) to name the request's field. */
function overrideError(e: unknown, field: string, what?: string): never {
  if (e instanceof CircuitError) {
    const msg = e.issues[0] ?? e.message;
    throw unprocessable(msg.startsWith("overrides.") ? `${field}.${msg.slice("overrides.".length)}` : `${field}: ${what ? `${what} gives ` : ""}${msg}`);
  }
  throw e;
}

/** Version of a design: must exist, be readable by the user and belong to the comparison's lab. */
async function designVersion(userId: string, labId: string, versionId: string, field: string): Promise<VersionRow> {
  const v = await requireVersion(userId, versionId, "lab:read").catch((e) => {
    if ((e as { status?: number }).status === 404) throw unprocessable(`${field}: no such circuit version in your labs`);
    throw e;
  });
  if (v.labId !== labId) throw unprocessable(`${field}: the version belongs to another lab`);
  return v;
}

const labelOf = (v: VersionRow, overrides: Record<string, number>) => {
  const extra = Object.entries(overrides).map(([k, x]) => `${k} = ${x}`).join(", ");
  return `${v.circuit.name} v${v.number}${extra ? ` (${extra})` : ""}`.slice(0, 80);
};

/**
 * Stores a comparison (designs listed, or a sweep expanded into designs) as a draft, and
 * launches it when asked. Every design's overrides are checked against its circuit.
 * @throws 404/403 (lab, role), 422 naming the field (versions, parameters, bounds), 429 (queue).
 */
export async function createComparison(userId: string, body: ComparisonCreate, actor?: Actor): Promise<{ id: string; designs: number; runs: string[] | null; cost?: LaunchCost }> {
  await requireLabRole(userId, body.lab_id, "comparison:write");
  if (body.launch) await requireLabRole(userId, body.lab_id, "run:launch");
  const designs: NewDesign[] = [];
  if (body.designs) {
    for (const [i, d] of body.designs.entries()) {
      const v = await designVersion(userId, body.lab_id, d.version_id, `designs[${i}].version_id`);
      const overrides = d.overrides ?? {};
      try {
        checkOverrides(v.circuit, overrides);
      } catch (e) {
        overrideError(e, `designs[${i}].overrides`);
      }
      designs.push({ position: i, label: d.label ?? labelOf(v, overrides), versionId: v.id, overrides, sweepValues: null });
    }
  } else {
    const sweep = body.sweep as Sweep;
    const v = await designVersion(userId, body.lab_id, sweep.version_id, "sweep.version_id");
    const params = Object.keys(v.circuit.parameters ?? {});
    sweep.axes.forEach((a, k) => {
      if (!params.includes(a.parameter)) {
        throw unprocessable(`sweep.axes[${k}].parameter: unknown parameter "${a.parameter}"${params.length ? ` (the circuit has ${params.join(", ")})` : " (the circuit has no parameters)"}`);
      }
    });
    const base = sweep.overrides ?? {};
    try {
      checkOverrides(v.circuit, base);
    } catch (e) {
      overrideError(e, "sweep.overrides");
    }
    for (const [i, g] of sweepDesigns(sweep).entries()) {
      const overrides = { ...base, ...g.values };
      try {
        checkOverrides(v.circuit, overrides);
      } catch (e) {
        overrideError(e, "sweep.axes", g.label);
      }
      designs.push({ position: i, label: g.label, versionId: v.id, overrides, sweepValues: g.values });
    }
  }
  // Labels name designs in tables and tests: keep them unique.
  const seen = new Map<string, number>();
  for (const d of designs) {
    const n = (seen.get(d.label) ?? 0) + 1;
    seen.set(d.label, n);
    if (n > 1) d.label = `${d.label} (${n})`;
  }
  const s = body.settings;
  const kind = body.designs ? "designs" : "sweep";
  // A launch that would be refused is refused before anything is stored, so no draft is left behind.
  if (body.launch) {
    const versions = new Map<string, VersionRow>();
    for (const d of designs) if (!versions.has(d.versionId)) versions.set(d.versionId, (await getVersion(d.versionId))!);
    const budget = getRunBudget();
    const { cost } = await comparisonWork(s, designs.map((d) => ({ version: versions.get(d.versionId)!, overrides: d.overrides })), budget);
    requireQueueRoom(await getQueuedWork(body.lab_id, userId), cost, designs.length, budget, "this comparison");
  }
  const id = await insertComparison({
    labId: body.lab_id, name: body.name, description: body.description ?? null, kind,
    sweep: body.sweep ?? null,
    settings: { method: s.method, t_end: s.t_end, dt: s.dt, runs: s.runs, ...(s.burn_in !== undefined ? { burn_in: s.burn_in } : {}) },
    seed: s.seed ?? drawSeed(), commonSeed: s.common_seed, createdBy: userId,
  }, designs, actor ? (cid) => comparisonEvent(actor, { id: cid, labId: body.lab_id, name: body.name, kind }, "comparison.created", { designs: designs.length }) : undefined);
  if (!body.launch) return { id, designs: designs.length, runs: null };
  try {
    const { runs, cost } = await launchComparison(userId, id, actor);
    return { id, designs: designs.length, runs, cost };
  } catch (e) {
    // Another launch took the room between the check above and this one: the draft stays, and says so.
    if (e instanceof HttpError && e.status === 429) throw new HttpError(429, `${e.message}; the comparison was saved as draft #${id}`);
    throw e;
  }
}

/**
 * Expected cost of a comparison in cell-events: every design's ensemble with the shared settings
 * (a comparison counts by all its designs); `costs` per design, in order.
 * @throws 422 naming settings.runs or settings.t_end when it alone is over the budget.
 */
async function comparisonWork(
  s: Pick<ComparisonCreate["settings"], "method" | "t_end" | "dt" | "runs">, designs: { version: VersionRow; overrides: Record<string, number> }[], budget: RunBudget,
): Promise<{ cost: number; costs: number[] }> {
  // One after the other: a comparison of 24 designs must not take every engine thread at once.
  const work: { cost: number; perCell: number }[] = [];
  for (const d of designs) await requireStochasticRates(d.version.circuit, s.method);
  for (const d of designs) work.push(await estimateRunWork(d.version.id, d.version.circuit, { method: s.method, tEnd: s.t_end, dt: s.dt, cells: s.runs, overrides: d.overrides }));
  const cost = work.reduce((sum, w) => sum + w.cost, 0);
  // One cell of every design: over the budget alone, only a shorter run helps.
  const perCell = work.reduce((sum, w) => sum + w.perCell, 0);
  requireFitsBudget(cost, perCell, budget, { cells: "settings.runs", tEnd: "settings.t_end" }, `this comparison of ${designs.length} designs`);
  return { cost, costs: work.map((w) => w.cost) };
}

/**
 * Launches one ensemble per design with the comparison's settings: seed S for every design with
 * common random numbers, else S + position. Every design's ensemble is charged against the lab's
 * and the user's budget of queued work.
 * @throws 404/403, 409 when it is running or finished, 422 when it alone is over the budget, 429 when the queue has no room for it.
 */
export async function launchComparison(userId: string, rawId: string, actor?: Actor): Promise<{ runs: string[]; cost: LaunchCost }> {
  const c = await requireComparison(userId, rawId, "run:launch");
  if (!["draft", "failed", "cancelled"].includes(c.status)) throw conflict(`status: the comparison is ${c.status}; only a draft, failed or cancelled one can be launched`);
  const designs = await listDesigns(c.id);
  if (designs.length < COMPARISON_LIMITS.minDesigns) throw conflict(`designs: a comparison needs at least ${COMPARISON_LIMITS.minDesigns} designs`);
  const s = c.settings;
  const versions = new Map<string, VersionRow>();
  for (const d of designs) if (!versions.has(d.versionId)) versions.set(d.versionId, (await getVersion(d.versionId))!);
  const budget = getRunBudget();
  const { cost, costs } = await comparisonWork(s, designs.map((d) => ({ version: versions.get(d.versionId)!, overrides: d.overrides ?? {} })), budget);
  const chunksTotal = Math.ceil(s.runs / RUN_LIMITS.chunkCells);
  const inserts = designs.map((d, i) => {
    // A design run stores its settings as any launch does (lib/schemas/run-options.ts settingsOf).
    const settings = settingsOf({
      method: s.method, t_end: s.t_end, dt: s.dt, runs: s.runs, ...(s.burn_in !== undefined ? { burn_in: s.burn_in } : {}),
      ...(d.overrides ? { overrides: d.overrides } : {}), units: "molecules",
    });
    return { designId: d.id, versionId: d.versionId, method: s.method, settings, seed: c.commonSeed ? c.seed : c.seed + d.position, chunksTotal, cost: costs[i]! };
  });
  const seen: { queued?: QueuedWork } = {}; // what the guard saw, for the answer
  // The design runs, comparison.launched and one run.launched per design run commit together.
  const ids = await insertDesignRuns(c.id, c.labId, userId, ENGINE_VERSION, inserts, (queued) => {
    requireQueueRoom(queued, cost, inserts.length, budget, "this comparison");
    seen.queued = queued;
  }, actor ? async (runIds, trx) => {
    if (!runIds) return null;
    const rows = await Promise.all(runIds.map((id) => getRun(id, trx)));
    return [
      comparisonEvent(actor, c, "comparison.launched", { runs: runIds.length }),
      ...rows.map((row) => launchedEvent(actor, row!, { comparison_id: c.id, comparison: c.name })),
    ];
  } : undefined);
  if (!ids) throw conflict("status: the comparison was launched meanwhile");
  const jobs = ids.flatMap((runId) => Array.from({ length: chunksTotal }, (_, chunkIndex) => ({
    data: { runId, chunkIndex } satisfies RunChunkJob, singletonKey: `${runId}:${chunkIndex}`,
  })));
  try {
    await (await getSender()).insert(Queues.runChunk, jobs);
  } catch (e) {
    for (const id of ids) await failRun(id, "queue: the run could not be queued; try again");
    await endComparison(c.id, "failed", "queue: the design runs could not be queued; launch again");
    throw e;
  }
  return { runs: ids, cost: launchCostJson(cost, seen.queued!, budget) };
}

/** Cancels a running comparison and its unfinished runs. @throws 409 when it is not running. */
export async function cancelComparison(actor: Actor, rawId: string): Promise<ComparisonRow> {
  const c = await requireComparison(actor.id, rawId, "run:cancel");
  if (c.status !== "running") throw conflict(`status: the comparison is ${c.status}`);
  const cancelled = await cancelComparisonRuns(c.id, "cancelled by a member of the lab", (n) => n === null ? null : comparisonEvent(actor, c, "comparison.cancelled", { runs_cancelled: n }));
  if (cancelled === null) throw conflict("status: the comparison ended meanwhile");
  return (await getComparison(c.id)) ?? c;
}

/** Deletes a comparison (owner), cancelling its unfinished design runs; its finished runs stay in the lab's runs. */
export async function removeComparison(actor: Actor, rawId: string): Promise<void> {
  const c = await requireComparison(actor.id, rawId, "delete");
  const deleted = await deleteComparison(c.id, (r) => r && comparisonEvent(actor, c, "comparison.deleted", { status: r.status, runs_cancelled: r.runsCancelled }));
  if (!deleted) throw notFound("comparison");
}

type Actor = { id: string; email: string };
type ComparisonAction = "comparison.created" | "comparison.launched" | "comparison.cancelled" | "comparison.deleted";

/** A comparison.* event naming the comparison (its name and kind, plus `details`). */
export function comparisonEvent(actor: Actor, c: Pick<ComparisonRow, "id" | "labId" | "name" | "kind">, action: ComparisonAction, details: Record<string, unknown> = {}): AuditEventInput {
  return { labId: c.labId, actor, action, target: { type: "comparison", id: c.id }, details: { name: c.name, kind: c.kind, ...details } };
}

/**
 * Reconciles a comparison with its runs without computing anything: a failed or cancelled design
 * run ends it (failed, with the reason). "ready" when it is running and every design run has
 * succeeded (its results remain to be computed); otherwise its status; null when it is gone.
 */
async function reconcileWithRuns(id: string): Promise<{ status: ComparisonRow["status"] | "ready"; c: ComparisonRow; designs: DesignRow[] } | null> {
  const c = await getComparison(id);
  if (!c) return null;
  if (c.status !== "running") return { status: c.status, c, designs: [] };
  const designs = await listDesigns(id);
  const broken = designs.find((d) => !d.runId || d.runStatus === "failed" || d.runStatus === "cancelled");
  if (broken) {
    const why = !broken.runId ? "its run was deleted"
      : broken.runStatus === "cancelled" ? `run #${broken.runId} was cancelled` : `run #${broken.runId} failed: ${broken.runError ?? "no reason given"}`;
    // The other designs' ensembles would be of no use now: stop them and free the lab's queue.
    if (await endComparison(id, "failed", `design "${broken.label}": ${why}`)) await cancelDesignRuns(id);
    return { status: "failed", c, designs };
  }
  return { status: designs.every((d) => d.runStatus === "succeeded") ? "ready" : "running", c, designs };
}

/**
 * What a read does with a running comparison: reconciles it with its runs and, when every design
 * run succeeded more than READ_REQUESTS_AFTER_S ago and the results are still missing, queues
 * one job (per comparison at a time) for a worker to compute them. Returns the status.
 */
async function reconcileComparisonOnRead(id: string): Promise<ComparisonRow["status"] | null> {
  const r = await reconcileWithRuns(id);
  if (!r) return null;
  if (r.status !== "ready") return r.status;
  const last = Math.max(...r.designs.map((d) => (d.runFinishedAt ? new Date(d.runFinishedAt).getTime() : Date.now())));
  if (Date.now() - last >= READ_REQUESTS_AFTER_S * 1000) {
    try {
      // The queue keeps one such job per comparison until it has run (policy "exclusive"): reads that repeat add none.
      await (await getSender()).send(Queues.comparisonFinish, { comparisonId: id } satisfies ComparisonFinishJob, { singletonKey: id });
    } catch (e) {
      // The read still answers; the next one asks again.
      console.error(`[comparison] could not queue the results of comparison ${id}`, e);
    }
  }
  return "running";
}

/**
 * Brings a running comparison up to date with its runs, idempotently: a failed or cancelled
 * design run ends it (failed, with the reason); when every design run has succeeded, computes
 * the noise table and stores it (a second caller finds it stored and does nothing). Called by
 * the worker only (when a run finishes, and for the job a read queues): never on a web thread.
 * Returns the status.
 */
export async function refreshComparison(id: string): Promise<ComparisonRow["status"] | null> {
  const r = await reconcileWithRuns(id);
  if (!r) return null;
  if (r.status !== "ready") return r.status;
  const { c, designs } = r;
  let results: ComparisonResultsJson;
  try {
    results = await computeResults(c, designs);
  } catch (e) {
    await endComparison(id, "failed", `results: ${e instanceof Error ? e.message : String(e)}`);
    return "failed";
  }
  await storeComparisonResults(id, results);
  return "succeeded";
}

/** What the worker calls when a run reaches a final state: refresh its comparison, if any. */
export async function refreshComparisonOfRun(runId: string): Promise<void> {
  const id = await getComparisonIdOfRun(runId);
  if (id) await refreshComparison(id);
}

const num = (v: number): number | null => (Number.isFinite(v) ? v : null);
const ivJson = (iv: Interval): IntervalJson => ({ value: num(iv.value), lo: num(iv.lo), hi: num(iv.hi) });

interface StoredNoise { period?: Record<string, { oscillating?: boolean; count?: number }> }

async function designCellStats(d: DesignRow): Promise<CellStats> {
  const data = d.runId ? await getRunCellStats(d.runId) : null;
  if (!data) throw new Error(`design "${d.label}": run #${d.runId} has no per-cell statistics (it finished before they were stored); launch the comparison again`);
  return decodeCellStats(data);
}

/** LNA CV and Fano per species at a design's steady state, with whether it is stable. */
function lnaOf(circuit: VersionRow["circuit"], overrides: Record<string, number>): { stable: boolean | null; oscillatory: boolean | null; note: string; cv: Record<string, number | null> | null; fano: Record<string, number | null> | null } {
  const p = predictLna(circuit, overrides);
  if (!p.lna) return { stable: p.stable, oscillatory: p.oscillatory, cv: null, fano: null, note: p.note ?? "" };
  return { stable: true, oscillatory: p.oscillatory, cv: p.lna.cv, fano: p.lna.fano, note: "LNA at the stable steady state" };
}

/**
 * The noise table: per design and species, mean, SD, CV, Fano, period mean and period CV with
 * 95% percentile-bootstrap intervals over cells (seeded: the comparison's seed, stream = the
 * design's position), and the LNA prediction where the design's steady state is stable.
 */
async function computeResults(c: ComparisonRow, designs: DesignRow[]): Promise<ComparisonResultsJson> {
  const versions = new Map<string, VersionRow>();
  const out: DesignResultJson[] = [];
  let timeUnit = "";
  for (const d of designs) {
    if (!versions.has(d.versionId)) {
      const v = await getVersion(d.versionId);
      if (!v) throw new Error(`design "${d.label}": its circuit version is gone`);
      versions.set(d.versionId, v);
    }
    const v = versions.get(d.versionId)!;
    timeUnit ||= v.circuit.units.time;
    const species = v.circuit.species.map((s) => s.id);
    const cs = await designCellStats(d);
    if (cs.nSpecies !== species.length) throw new Error(`design "${d.label}": per-cell statistics do not match the circuit's species`);
    const noise = (await getRunNoise<StoredNoise>(d.runId!)) ?? {};
    const warnings = await getRunWarnings(d.runId!);
    const intervals = bootstrapNoise(cs, { seed: c.seed, stream: d.position, replicates: COMPARISON_LIMITS.replicates, level: COMPARISON_LIMITS.level });
    const lna = lnaOf(v.circuit, d.overrides ?? {});
    out.push({
      design_id: d.id, position: d.position, label: d.label, run_id: d.runId!, seed: d.runSeed ?? c.seed, cells: cs.cells,
      values: d.sweepValues, lna: { stable: lna.stable, oscillatory: lna.oscillatory, note: lna.note }, warnings,
      species: species.map((sp, i): SpeciesNoiseJson => {
        const iv = intervals[i]!;
        const oscillating = noise.period?.[sp]?.oscillating === true;
        return {
          species: sp, mean: ivJson(iv.mean), sd: ivJson(iv.sd), cv: ivJson(iv.cv), fano: ivJson(iv.fano),
          period_mean: oscillating ? ivJson(iv.periodMean) : null, period_cv: oscillating ? ivJson(iv.periodCv) : null,
          period_count: iv.periodCount, oscillating,
          lna_cv: lna.cv?.[sp] ?? null, lna_fano: lna.fano?.[sp] ?? null,
        };
      }),
    });
  }
  return {
    format: "burstwise.comparison-results/1", computed_at: new Date().toISOString(),
    level: COMPARISON_LIMITS.level, replicates: COMPARISON_LIMITS.replicates, bootstrap_seed: c.seed,
    method: c.settings.method, time_unit: timeUnit, amount_unit: "molecules", designs: out,
    lna_curve: c.kind === "sweep" ? lnaCurve(c, designs, versions) : null,
  };
}

/** The LNA CV along the sweep's first axis, densely (per value of the second axis for a grid). */
function lnaCurve(c: ComparisonRow, designs: DesignRow[], versions: Map<string, VersionRow>): LnaCurveJson | null {
  const sweep = c.sweep as Sweep | null;
  const first = sweep?.axes[0];
  const v = designs[0] ? versions.get(designs[0].versionId) : undefined;
  if (!sweep || !first || !v) return null;
  const xs = axisValues(first);
  const lo = Math.min(...xs);
  const hi = Math.max(...xs);
  const second = sweep.axes[1];
  const groups = second ? axisValues(second) : [null];
  const n = second ? Math.max(11, Math.floor(LNA_CURVE_POINTS / 2)) : LNA_CURVE_POINTS;
  const log = first.scale === "log" && lo > 0;
  const points: LnaCurveJson["points"] = [];
  for (const g of groups) {
    for (let i = 0; i < n; i++) {
      const f = i / (n - 1);
      const x = log ? lo * Math.pow(hi / lo, f) : lo + (hi - lo) * f;
      const overrides = { ...(sweep.overrides ?? {}), [first.parameter]: x, ...(second && g !== null ? { [second.parameter]: g } : {}) };
      try {
        checkOverrides(v.circuit, overrides);
      } catch {
        continue;
      }
      const lna = lnaOf(v.circuit, overrides);
      points.push({ x, group: g, cv: lna.cv ?? {} });
    }
  }
  return { parameter: first.parameter, scale: first.scale, group: second?.parameter ?? null, points };
}

/** The difference test as the engine thread answers it: DifferenceTest numbers, non-finite ones as null. */
type DifferenceOutcome = { paired: boolean; cv: NullableDifference; periodCv: NullableDifference | null };
type NullableDifference = { [K in keyof DifferenceTest]: DifferenceTest[K] | null };

const numOrNull = (v: number | null): number | null => (v !== null && Number.isFinite(v) ? v : null);

// Requests for the same test while it is being computed wait for that one computation.
const testsInFlight = new Map<string, Promise<string>>();

/**
 * "Is B less noisy than A?": a bootstrap test of the difference in CV (and in period CV where
 * both oscillate) of one species between two designs of a finished comparison; paired
 * resampling when both ran with the same seed (common random numbers). Seeded: reproducible.
 * Computed on the engine pool within COMPARISON_TEST_BUDGET_S, once: a succeeded comparison never
 * changes, so the answer is stored and later requests get it, marked `x-burstwise-cache: hit`.
 * @throws 404/403, 409 when the comparison has not succeeded, 422 naming a bad design or species
 *   (or the budget), 503 when the engine is busy.
 */
export async function respondWithDifferenceTest(userId: string, rawId: string, q: { a: string; b: string; species: string }): Promise<Response> {
  const c = await requireComparison(userId, rawId);
  if (c.status !== "succeeded") throw conflict(`status: the comparison is ${c.status}; the test needs every design's ensemble`);
  const designs = await listDesigns(c.id);
  const a = designs.find((d) => d.id === q.a);
  const b = designs.find((d) => d.id === q.b);
  if (!a) throw unprocessable(`a: not a design of this comparison`);
  if (!b) throw unprocessable(`b: not a design of this comparison`);
  if (a.id === b.id) throw unprocessable("b: must be another design than a");
  const results = await getComparisonResults<ComparisonResultsJson>(c.id);
  const ra = results?.designs.find((d) => d.design_id === a.id);
  const rb = results?.designs.find((d) => d.design_id === b.id);
  const ia = ra?.species.findIndex((s) => s.species === q.species) ?? -1;
  const ib = rb?.species.findIndex((s) => s.species === q.species) ?? -1;
  if (!ra || !rb || ia < 0 || ib < 0) throw unprocessable(`species: "${q.species}" is not a species of both designs`);
  const key: ComparisonTestKey = { comparisonId: c.id, designA: a.id, designB: b.id, species: q.species, engineVersion: ENGINE_VERSION };
  let cache: "hit" | "miss" = "hit";
  let body = await getComparisonTest(key);
  if (body === null) {
    const k = JSON.stringify(key);
    let pending = testsInFlight.get(k);
    if (!pending) {
      cache = "miss";
      pending = computeDifferenceTest(c, { design: a, species: ia, noise: ra.species[ia]! }, { design: b, species: ib, noise: rb.species[ib]! }, q.species)
        .then(async (text) => {
          await putComparisonTest(key, text).catch((e) => console.error(`[comparison] could not store a test of comparison ${c.id}`, e));
          return text;
        })
        .finally(() => testsInFlight.delete(k));
      testsInFlight.set(k, pending);
    }
    body = await pending;
  }
  return new Response(body, { headers: { "content-type": "application/json", "x-burstwise-cache": cache } });
}

type TestSide = { design: DesignRow; species: number; noise: SpeciesNoiseJson };

/** The test's JSON text, its bootstrap computed on the engine pool from the runs' stored per-cell sums. */
async function computeDifferenceTest(c: ComparisonRow, A: TestSide, B: TestSide, species: string): Promise<string> {
  const [a, b] = [A.design, B.design];
  const gz = async (d: DesignRow) => {
    const data = d.runId ? await getRunCellStatsGz(d.runId) : null;
    if (!data) throw conflict(`${d === a ? "a" : "b"}: run #${d.runId} of design "${d.label}" has no per-cell statistics; launch the comparison again`);
    return data;
  };
  const [gzA, gzB] = await Promise.all([gz(a), gz(b)]);
  const outcome = await runEngineTask({
    kind: "difference", a: { cellStatsGz: gzA, species: A.species }, b: { cellStatsGz: gzB, species: B.species },
    options: {
      seed: c.seed, stream: 1_000_000 + 2 * (a.position * 64 + b.position), replicates: COMPARISON_LIMITS.replicates, level: COMPARISON_LIMITS.level,
      paired: a.runSeed !== null && a.runSeed === b.runSeed,
    },
  }, env.COMPARISON_TEST_BUDGET_S, (why) => `test: ${why}; the ensembles are too large to test on the server`);
  if (!outcome.ok) throw new Error(`difference test of comparison ${c.id}: ${outcome.name}: ${outcome.message}`);
  const t = JSON.parse(outcome.json) as DifferenceOutcome;
  const sa = A.noise;
  const sb = B.noise;
  const bothOscillate = sa.oscillating && sb.oscillating;
  const diff = (d: NullableDifference) => ({
    difference: numOrNull(d.difference), lo: numOrNull(d.lo), hi: numOrNull(d.hi), p_value: numOrNull(d.pValue), share_b_lower: numOrNull(d.shareBLower), replicates: d.replicates ?? 0,
    significant: d.pValue !== null && Number.isFinite(d.pValue) && d.pValue < TEST_ALPHA,
  });
  const json: DifferenceTestJson = {
    species, level: COMPARISON_LIMITS.level, paired: t.paired, replicates: COMPARISON_LIMITS.replicates,
    a: { design_id: a.id, label: a.label, cv: sa.cv.value, period_cv: sa.period_cv?.value ?? null },
    b: { design_id: b.id, label: b.label, cv: sb.cv.value, period_cv: sb.period_cv?.value ?? null },
    cv: diff(t.cv),
    period_cv: bothOscillate && t.periodCv ? diff(t.periodCv) : null,
    period_note: bothOscillate ? null : `${species} does not oscillate in ${!sa.oscillating ? "A" : "B"}: no period to compare`,
    caveat: MODEL_CAVEAT,
  };
  return JSON.stringify(json);
}

/** Every design's bands of one species (from the run summaries), thinned to about `points` times. */
export async function comparisonBands(userId: string, rawId: string, q: { species: string; points: number }): Promise<ComparisonBandsJson> {
  const c = await requireComparison(userId, rawId);
  const designs = await listDesigns(c.id);
  const out: ComparisonBandsJson = { species: q.species, time_unit: "", amount_unit: "molecules", designs: [] };
  for (const d of designs) {
    if (!d.runId || d.runStatus !== "succeeded") continue;
    const parts = await getRunSummaryParts(d.runId);
    if (!parts) continue;
    const s = JSON.parse(parts.summary) as { times: number[]; time_unit?: string; mean: Record<string, (number | null)[]>; quantiles: Record<string, Record<string, (number | null)[]>> };
    const qs = s.quantiles[q.species];
    if (!qs) continue;
    out.time_unit ||= s.time_unit ?? "";
    const step = Math.max(1, Math.ceil(s.times.length / q.points));
    const pick = <T,>(xs: T[]) => xs.filter((_, g) => g % step === 0 || g === xs.length - 1);
    out.designs.push({
      design_id: d.id, label: d.label, times: pick(s.times), mean: pick(s.mean[q.species] ?? []),
      p05: pick(qs.p05 ?? []), p25: pick(qs.p25 ?? []), p50: pick(qs.p50 ?? []), p75: pick(qs.p75 ?? []), p95: pick(qs.p95 ?? []),
    });
  }
  if (!out.designs.length && designs.some((d) => d.runStatus === "succeeded")) throw unprocessable(`species: "${q.species}" is not a species of these designs`);
  return out;
}
