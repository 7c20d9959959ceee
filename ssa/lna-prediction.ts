// The LNA prediction of one circuit with parameter overrides: the one function the comparison
// noise table, its sweep curve and the run page (in the browser, for a run with overrides) call,
// so the three cannot drift apart. The web app's analysis route gives the same numbers through
// the engine pool (`analyze` of the saved parameters).
import { analyze, type AnalyzeResult } from "./analyze";
import { compileModel } from "./model";
import type { Circuit } from "./types";

export interface LnaPrediction {
  /** null when no steady state could be analysed (then `error` says why). */
  stable: boolean | null;
  oscillatory: boolean | null;
  /** The LNA at the stable steady state (molecules), or null when it does not apply. */
  lna: AnalyzeResult["lna"];
  /** The whole analysis, for callers that show more than the LNA. */
  analysis: AnalyzeResult | null;
  /** Why there is no LNA, in words, or null when there is one. */
  note: string | null;
  error: string | null;
}

/** Compiles the circuit with `overrides`, finds its steady state and, when stable, its LNA. Never throws. */
export function predictLna(circuit: Circuit, overrides: Record<string, number> = {}): LnaPrediction {
  try {
    const a = analyze(compileModel(circuit, overrides));
    const note = a.lna ? null
      : a.oscillatory ? "unstable steady state (oscillatory: past a Hopf bifurcation); the LNA does not apply" : "unstable steady state; the LNA does not apply";
    return { stable: a.stable, oscillatory: a.oscillatory, lna: a.lna, analysis: a, note, error: null };
  } catch (e) {
    const error = e instanceof Error ? e.message : String(e);
    return { stable: null, oscillatory: null, lna: null, analysis: null, note: `no LNA: ${error}`, error };
  }
}
