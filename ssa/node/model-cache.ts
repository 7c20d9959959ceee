/**
 * The engine's one model cache: a compiled model (and the kernels it generates) per circuit and
 * overrides, kept per thread, so the chunks, the finalize step and the cell replays of a run on
 * one thread compile it once. The formula parser (mathjs, about a second to load) is loaded only
 * for circuits that have formulas. Node only (used by ssa/node/engine-task.ts and run-engine.ts).
 */
import type { Expr } from "../expr-ast";
import { compileParsedModel, type Model } from "../model-core";
import type { BurnInChoice } from "../stationarity";
import type { Circuit } from "../types";
import { loadModule } from "./load-module";

/** Models kept per thread: a worker thread serves a few runs at a time. */
const MAX_MODELS = 4;
const models = new Map<string, Model>();
const burnIns = new WeakMap<Model, Map<string, BurnInChoice>>();

/**
 * Parsed formulas of a circuit (null for other laws), loading the parser only when there is one.
 * @throws ModelInputError naming the field of a bad formula.
 */
export async function parseExpressionsLazily(circuit: Circuit, overrides?: Record<string, number>): Promise<(Expr | null)[]> {
  if (!circuit.reactions.some((r) => r.rate.law === "expression")) return circuit.reactions.map(() => null);
  return (await loadModule(() => import("../model"), () => require("../model") as typeof import("../model"))).parseCircuitExpressions(circuit, overrides);
}

/**
 * The compiled model of `circuit` with `overrides`, from this thread's cache.
 * @throws ModelInputError / RangeError for a circuit that cannot be compiled.
 */
export async function getModel(circuit: Circuit, overrides?: Record<string, number>): Promise<Model> {
  const key = JSON.stringify([circuit, overrides ?? null]);
  const hit = models.get(key);
  if (hit) {
    models.delete(key); // most recently used last
    models.set(key, hit);
    return hit;
  }
  const model = compileParsedModel(circuit, overrides, await parseExpressionsLazily(circuit, overrides));
  models.set(key, model);
  while (models.size > MAX_MODELS) models.delete(models.keys().next().value!);
  return model;
}

/**
 * The run's burn-in (ssa/burn-in.ts): the given one, else from the circuit's relaxation time.
 * It depends only on the model and (tEnd, burnIn), so every chunk and the finalize step of a run
 * find the same value; kept per model so the steady state is found once per thread. The
 * steady-state code is loaded only when needed.
 */
export async function getBurnIn(model: Model, o: { tEnd: number; burnIn?: number }): Promise<BurnInChoice> {
  let byKey = burnIns.get(model);
  if (!byKey) burnIns.set(model, (byKey = new Map()));
  const key = `${o.tEnd}:${o.burnIn ?? ""}`;
  let choice = byKey.get(key);
  if (!choice) byKey.set(key, (choice = (await loadModule(() => import("../burn-in"), () => require("../burn-in") as typeof import("../burn-in"))).chooseBurnIn(model, o)));
  return choice;
}

/** The burn-in a chunk sums from: the given one at once, else getBurnIn's. */
export async function getBurnInValue(model: Model, o: { tEnd: number; burnIn?: number }): Promise<number> {
  return o.burnIn !== undefined ? o.burnIn : (await getBurnIn(model, o)).burnIn;
}
