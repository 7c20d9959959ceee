import { parseCircuit } from "@/lib/schemas/circuit";
import { unprocessable } from "@/lib/http";
import { sbmlToCircuit, SbmlError } from "@/ssa/sbml";
import type { Circuit } from "@/ssa/types";

/**
 * A circuit from an API body: the circuit JSON, or SBML text converted to a circuit and then
 * validated like any circuit file.
 * @throws CircuitError or HttpError 422 naming the field (or the SBML element).
 */
export async function circuitFromBody(body: { circuit?: unknown; sbml?: string }): Promise<{ circuit: Circuit; sourceFormat: "circuit" | "sbml"; warnings: string[] }> {
  if (body.sbml !== undefined) {
    try {
      const { circuit, warnings } = sbmlToCircuit(body.sbml);
      return { circuit: parseCircuit(circuit), sourceFormat: "sbml", warnings };
    } catch (e) {
      if (e instanceof SbmlError) throw unprocessable(e.message.startsWith("sbml") ? e.message : `sbml: ${e.message}`);
      throw e;
    }
  }
  return { circuit: parseCircuit(body.circuit), sourceFormat: "circuit", warnings: [] };
}
