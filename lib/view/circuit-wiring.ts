/**
 * The wiring of a circuit: which species activates or represses which, read from its reactions,
 * and a circle layout to draw it. Pure and isomorphic (the editor redraws it as the modeler types).
 *
 * Rules, per reaction, with Δs the net change of species s (products minus reactants):
 * - Hill law with input I: I → s for every s with Δs ≠ 0. Activation of a production (Δs > 0) is
 *   an activation of s; activation of a loss (Δs < 0) lowers s, so it is drawn as a repression,
 *   and the other way round for hill_repression.
 * - Mass action: a plain arrow from each reactant r to each product p ≠ r with Δp > 0 (a
 *   conversion, or a template such as mRNA → protein in M → M + P).
 * - Expression: an arrow of unknown sign from each species the formula reads to each s with
 *   Δs ≠ 0 (a species' own loss, s reading s with Δs < 0, is left out).
 * Sources and sinks (∅ → X, X → ∅) draw no edge.
 */
import { expressionSpecies, parseExpression } from "@/ssa/expr";
import type { Circuit } from "@/ssa/types";

export type WiringKind = "activation" | "repression" | "conversion" | "influence";

export interface WiringEdge {
  from: string;
  to: string;
  kind: WiringKind;
  /** Ids of the reactions behind this edge, in circuit order. */
  reactions: string[];
}

export interface Wiring {
  nodes: string[];
  edges: WiringEdge[];
}

/** Net stoichiometric change of each species a reaction touches (zeros kept, so catalysts show up). */
function netChange(r: Circuit["reactions"][number]): Map<string, number> {
  const net = new Map<string, number>();
  for (const [s, nu] of Object.entries(r.reactants ?? {})) net.set(s, (net.get(s) ?? 0) - nu);
  for (const [s, nu] of Object.entries(r.products ?? {})) net.set(s, (net.get(s) ?? 0) + nu);
  return net;
}

/** The species-to-species edges of a valid circuit, merged by (from, to, kind), in order of first appearance. */
export function extractWiring(c: Circuit): Wiring {
  const speciesIds = new Set(c.species.map((s) => s.id));
  const params = c.parameters ?? {};
  const edges: WiringEdge[] = [];
  const add = (from: string, to: string, kind: WiringKind, reaction: string) => {
    if (!speciesIds.has(from) || !speciesIds.has(to)) return;
    const e = edges.find((x) => x.from === from && x.to === to && x.kind === kind);
    if (!e) edges.push({ from, to, kind, reactions: [reaction] });
    else if (!e.reactions.includes(reaction)) e.reactions.push(reaction);
  };
  for (const r of c.reactions) {
    const net = netChange(r);
    const rate = r.rate;
    if (rate.law === "hill_activation" || rate.law === "hill_repression") {
      const up = rate.law === "hill_activation";
      for (const [s, d] of net) {
        if (d !== 0) add(rate.input, s, d > 0 === up ? "activation" : "repression", r.id);
      }
    } else if (rate.law === "mass_action") {
      for (const reactant of Object.keys(r.reactants ?? {})) {
        for (const [p, d] of net) if (p !== reactant && d > 0) add(reactant, p, "conversion", r.id);
      }
    } else if (rate.law === "expression") {
      const parsed = parseExpression(rate.expression, {
        isSpecies: (id) => speciesIds.has(id),
        isParameter: (id) => Object.prototype.hasOwnProperty.call(params, id) && !speciesIds.has(id),
      });
      if (!parsed.ok) continue;
      for (const reads of expressionSpecies(parsed.expr)) {
        for (const [s, d] of net) if (d !== 0 && !(s === reads && d < 0)) add(reads, s, "influence", r.id);
      }
    }
  }
  return { nodes: c.species.map((s) => s.id), edges };
}

export interface Point {
  x: number;
  y: number;
}

/**
 * Nodes evenly on a circle of radius `r` around (cx, cy), the first at the top, then clockwise
 * (screen coordinates, y down). One node sits at the centre.
 */
export function layoutCircle(nodes: string[], cx: number, cy: number, r: number): Map<string, Point> {
  const out = new Map<string, Point>();
  if (nodes.length === 1) {
    out.set(nodes[0], { x: cx, y: cy });
    return out;
  }
  nodes.forEach((id, i) => {
    const a = -Math.PI / 2 + (2 * Math.PI * i) / nodes.length;
    out.set(id, { x: cx + r * Math.cos(a), y: cy + r * Math.sin(a) });
  });
  return out;
}
