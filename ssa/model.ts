/**
 * Circuit → compiled model (parsing the formulas of `expression` laws first), and the Counts view:
 * Ω with every converted constant and initial count. The engine proper is ssa/model-core.ts.
 * Pure: no I/O.
 */
import { expressionReadsTime, parseExpression, type Expr } from "./expr";
import { AVOGADRO, compileParsedModel, timeDependenceRefusal, type Model } from "./model-core";
import { ModelInputError, type AmountUnit, type Circuit, type NumberOrParam, type TimeUnit } from "./types";

export * from "./model-core";

/**
 * Parses the formula of every `expression` law (null for other laws), with the parameters after overrides.
 * @throws ModelInputError naming the field when a formula is invalid.
 */
export function parseCircuitExpressions(c: Circuit, overrides?: Record<string, number>): (Expr | null)[] {
  const speciesIds = new Set(c.species.map((s) => s.id));
  const params = { ...(c.parameters ?? {}), ...(overrides ?? {}) };
  return c.reactions.map((r, j) => {
    if (r.rate.law !== "expression") return null;
    const res = parseExpression(r.rate.expression, {
      isSpecies: (id) => speciesIds.has(id),
      isParameter: (id) => Object.prototype.hasOwnProperty.call(params, id) && !speciesIds.has(id),
    });
    if (!res.ok) throw new ModelInputError(`reactions[${j}].rate.expression: ${res.reason}`);
    return res.expr;
  });
}

/**
 * Why the stochastic methods cannot run a validated circuit, or null: a rate formula that reads
 * the time `t` (ssa/model-core.ts timeDependenceRefusal says why). Parses the formulas, nothing more.
 * @throws ModelInputError naming the field when a formula is invalid.
 */
export function stochasticRefusal(c: Circuit): string | null {
  const j = parseCircuitExpressions(c).findIndex((e) => e !== null && expressionReadsTime(e));
  return j < 0 ? null : timeDependenceRefusal({ timeReactions: [j] });
}

/**
 * Compiles a validated circuit, with optional parameter overrides, into typed arrays and the
 * rate and propensity functions.
 * @throws ModelInputError naming the field when an override is unknown or breaks a bound.
 */
export function compileModel(c: Circuit, overrides?: Record<string, number>): Model {
  return compileParsedModel(c, overrides, parseCircuitExpressions(c, overrides));
}

export interface ConvertedConstant {
  reaction: string;
  law: string;
  name: string;
  /** Value in the circuit's units, and the parameter it came from, if any. */
  value: number;
  unit: string;
  parameter?: string;
  /** Value in molecule units, as the stochastic engine uses it. */
  molecules: number;
  moleculesUnit: string;
  note?: string;
}

export interface CountsTable {
  omega: number;
  omegaUnit: string;
  volumeFL: number | null;
  amountUnit: AmountUnit;
  timeUnit: TimeUnit;
  avogadro: number;
  species: { id: string; initial: number; unit: string; molecules: number; count: number }[];
  constants: ConvertedConstant[];
}

function amountPower(unit: string, p: number): string {
  if (p === 0) return "";
  if (p === 1) return unit;
  return `${unit}^${p}`;
}

/**
 * Ω and every converted constant and initial count, for the Counts view and
 * `GET /api/versions/:id/counts` (SCIENCE.md "Conversions").
 * @throws ModelInputError for an unknown or out-of-range override.
 */
export function countsTable(c: Circuit, overrides?: Record<string, number>): CountsTable {
  const m = compileModel(c, overrides);
  const amount = c.units.amount;
  const time = c.units.time;
  const mol = "molecules";
  const species = c.species.map((s, i) => ({
    id: s.id,
    initial: s.initial,
    unit: amount,
    molecules: s.initial * m.omega,
    count: m.initialCounts[i],
  }));
  const constants: ConvertedConstant[] = [];
  const paramOf = (v: NumberOrParam | undefined) => (typeof v === "string" ? v : undefined);
  c.reactions.forEach((r, j) => {
    const rate = r.rate;
    if (rate.law === "mass_action") {
      const order = m.reactantOrder[j];
      const amountExp = 1 - order;
      const unit = amountExp === 0 ? `1/${time}` : amountExp > 0 ? `${amountPower(amount, amountExp)}/${time}` : `1/(${amountPower(amount, -amountExp)}·${time})`;
      const molUnit = amountExp === 0 ? `1/${time}` : amountExp > 0 ? `${mol}/${time}` : `1/(${amountPower("molecule", -amountExp)}·${time})`;
      constants.push({
        reaction: r.id,
        law: rate.law,
        name: "k",
        value: m.k[j],
        unit,
        parameter: paramOf(rate.k),
        molecules: m.c[j],
        moleculesUnit: molUnit,
        note: `order ${order}`,
      });
    } else if (rate.law === "expression") {
      constants.push({
        reaction: r.id,
        law: rate.law,
        name: "expression",
        value: NaN,
        unit: `${amount}/${time}`,
        molecules: NaN,
        moleculesUnit: `${mol}/${time}`,
        note: `f = ${rate.expression}`,
      });
    } else {
      const fields: [string, NumberOrParam | undefined, number, string, number, string][] = [
        ["vmax", rate.vmax, m.vmax[j], `${amount}/${time}`, m.vmax[j] * m.omega, `${mol}/${time}`],
        ["K", rate.K, m.K[j], amount, m.K[j] * m.omega, mol],
        ["n", rate.n, m.n[j], "1", m.n[j], "1"],
        ["basal", rate.basal, m.basal[j], `${amount}/${time}`, m.basal[j] * m.omega, `${mol}/${time}`],
      ];
      for (const [name, src, value, unit, molecules, moleculesUnit] of fields) {
        if (name === "basal" && src === undefined) continue;
        constants.push({ reaction: r.id, law: rate.law, name, value, unit, parameter: paramOf(src), molecules, moleculesUnit });
      }
    }
  });
  return {
    omega: m.omega,
    omegaUnit: amount === "molecules" ? "molecules per molecule" : `molecules per ${amount}`,
    volumeFL: c.volume_fL ?? null,
    amountUnit: amount,
    timeUnit: time,
    avogadro: AVOGADRO,
    species,
    constants,
  };
}
