/**
 * Starting points for a new circuit: a blank one and the shipped examples. Pure and isomorphic
 * (the create form in the browser imports it); the examples are validated once when loaded.
 */
import birthDeath from "@/examples/birth-death.circuit.json";
import ringTimer from "@/examples/ring-timer.circuit.json";
import twoStage from "@/examples/two-stage-reporter.circuit.json";
import { parseCircuit } from "@/lib/schemas/circuit";
import { CIRCUIT_FORMAT, type Circuit } from "@/ssa/types";

export interface CircuitTemplate {
  id: "blank" | "birth-death" | "two-stage-reporter" | "ring-timer";
  title: string;
  /** One sentence on what the template models, for the picker. */
  summary: string;
  circuit: Circuit;
}

/**
 * The smallest circuit the schema accepts (a file needs one species and one reaction): X made at
 * a constant rate k. The editor is where it grows.
 */
export function blankCircuit(name = "New circuit"): Circuit {
  return {
    format: CIRCUIT_FORMAT,
    name,
    units: { time: "min", amount: "molecules" },
    species: [{ id: "X", initial: 0 }],
    parameters: { k: 1 },
    reactions: [{ id: "make_X", products: { X: 1 }, rate: { law: "mass_action", k: "k" } }],
  };
}

export const CIRCUIT_TEMPLATES: readonly CircuitTemplate[] = [
  { id: "blank", title: "Blank", summary: "One species made at a constant rate; add the rest in the editor.", circuit: blankCircuit() },
  {
    id: "birth-death", title: "Birth–death",
    summary: "Constant production and first-order loss: the Poisson baseline, Fano factor 1.",
    circuit: parseCircuit(birthDeath),
  },
  {
    id: "two-stage-reporter", title: "Two-stage reporter",
    summary: "mRNA made and lost, protein translated from it: bursty expression with Fano above 1.",
    circuit: parseCircuit(twoStage),
  },
  {
    id: "ring-timer", title: "Ring timer",
    summary: "A activates B, B activates C, C represses A (Hill laws, nM in a 1 fL cell).",
    circuit: parseCircuit(ringTimer),
  },
];

/** The template with this id, as a fresh copy the caller may change; null for an unknown id. */
export function getTemplate(id: string): Circuit | null {
  const t = CIRCUIT_TEMPLATES.find((x) => x.id === id);
  return t ? structuredClone(t.circuit) : null;
}
