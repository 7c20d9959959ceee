import { parseCircuit } from "@/lib/schemas/circuit";
import type { Circuit } from "@/ssa/types";

/**
 * A circuit from an API body: the circuit JSON (SBML joins when the engine's importer lands).
 * @throws CircuitError (422) naming the field.
 */
export async function circuitFromBody(body: { circuit?: unknown; sbml?: string }): Promise<{ circuit: Circuit; sourceFormat: "circuit" | "sbml" }> {
  return { circuit: parseCircuit(body.circuit), sourceFormat: "circuit" };
}
