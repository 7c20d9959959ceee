import { parseCircuit } from "@/lib/schemas/circuit";
import { unprocessable } from "@/lib/http";
import { sbmlToCircuit, SbmlError } from "@/ssa/sbml";
import type { Circuit } from "@/ssa/types";
import type { EngineWarning } from "@/ssa/warnings";

/**
 * Wall-clock budget of one SBML import on the web thread. The import's own bounds (ssa/sbml-math.ts
 * EXPANSION_LIMITS) keep hostile files to milliseconds; this is the backstop for a large honest file
 * on a busy machine, so that no upload holds the thread for long.
 */
export const SBML_IMPORT_BUDGET_MS = 10_000;

/**
 * A circuit from an API body: the circuit JSON, or SBML text converted to a circuit and then
 * validated like any circuit file.
 * @throws CircuitError or HttpError 422 naming the field (or the SBML element).
 */
export async function circuitFromBody(body: { circuit?: unknown; sbml?: string }): Promise<{ circuit: Circuit; sourceFormat: "circuit" | "sbml"; warnings: EngineWarning[] }> {
  if (body.sbml !== undefined) {
    try {
      const { circuit, warnings } = sbmlToCircuit(body.sbml, { timeBudget: { ms: SBML_IMPORT_BUDGET_MS, now: () => performance.now() } });
      return { circuit: parseCircuit(circuit), sourceFormat: "sbml", warnings };
    } catch (e) {
      if (e instanceof SbmlError) throw unprocessable(e.message.startsWith("sbml") ? e.message : `sbml: ${e.message}`);
      throw e;
    }
  }
  return { circuit: parseCircuit(body.circuit), sourceFormat: "circuit", warnings: [] };
}
