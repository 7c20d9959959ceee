import { describe, expect, it } from "vitest";

import { compileModel } from "@/ssa/model";
import type { Circuit } from "@/ssa/types";

/** A seeded circuit of `nS` species and `nR` random mass-action and Hill reactions (LCG, Knuth's constants). */
function randomCircuit(nS: number, nR: number, seed: number): Circuit {
  let s = BigInt(seed);
  const next = (n: number) => {
    s = (s * 6364136223846793005n + 1442695040888963407n) & 0xffffffffffffffffn;
    return Number(s >> 33n) % n;
  };
  const sp = (i: number) => `S${i}`;
  const reactions: Circuit["reactions"] = [];
  for (let j = 0; j < nR; j++) {
    const reactants: Record<string, number> = {};
    const products: Record<string, number> = {};
    for (let k = next(3); k > 0; k--) reactants[sp(next(nS))] = 1 + next(2);
    for (let k = next(3); k > 0; k--) products[sp(next(nS))] = 1 + next(2);
    reactions.push(next(4) === 0
      ? { id: `r${j}`, reactants, products, rate: { law: "hill_activation", input: sp(next(nS)), vmax: 1, K: 2, n: 2 } }
      : { id: `r${j}`, reactants, products, rate: { law: "mass_action", k: 0.5 } });
  }
  return {
    format: "burstwise.circuit/1", name: "random", units: { time: "s", amount: "molecules" },
    species: Array.from({ length: nS }, (_, i) => ({ id: sp(i), initial: 3 })), parameters: {}, reactions,
  } as Circuit;
}

describe("dependency graph", () => {
  it("compileModel(c).dep lists, in ascending order, exactly the reactions that read a species reaction r changes (definition, checked by brute force)", () => {
    for (const seed of [1, 2, 3]) {
      const m = compileModel(randomCircuit(25, 300, seed));
      const row = (ptr: Int32Array, idx: Int32Array, r: number) => Array.from(idx.subarray(ptr[r], ptr[r + 1]));
      for (let r = 0; r < m.nReactions; r++) {
        const changed = new Set(row(m.changePtr, m.changeIdx, r));
        const expected: number[] = [];
        for (let q = 0; q < m.nReactions; q++) if (row(m.readsPtr, m.readsIdx, q).some((i) => changed.has(i))) expected.push(q);
        expect(row(m.depPtr, m.depIdx, r)).toEqual(expected);
      }
    }
  });
});
