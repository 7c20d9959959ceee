/**
 * Warnings that travel with results (issue 12): every engine entry point (simulate, trajectory,
 * analyze, SBML import) returns the caveats that apply to its numbers next to them, so a number
 * that may be wrong never reaches a user without saying so. Codes are stable strings that scripts
 * may match on (listed in the README); messages are for people and may change.
 */

/** One caveat on a result. */
export interface EngineWarning {
  /** Stable, kebab-case identifier, e.g. `grid-too-coarse`, `not-stationary`. */
  code: string;
  /** One sentence for a person: what is wrong and what to do about it. */
  message: string;
  /** The input field or output entry it concerns (`dt`, `stationary.P`, `period.A`), when there is one. */
  field?: string;
}

/** A warning; `field` is left out when there is none, so JSON stays small and stable. */
export function makeWarning(code: string, message: string, field?: string): EngineWarning {
  return field === undefined ? { code, message } : { code, message, field };
}
