// What one ensemble run loads and solves: kept small because start-up counts in every run.
import { readFileSync } from "node:fs";
import { dirname, join, resolve } from "node:path";

import { describe, expect, it } from "vitest";

import { findSteadyState } from "@/ssa/analyze";
import { compileModel } from "@/ssa/model";

/** Relative imports (static, not `import type`) reachable from `entry`, as repository paths. */
function staticImports(entry: string): Set<string> {
  const seen = new Set<string>();
  const stack = [resolve(entry)];
  while (stack.length) {
    const file = stack.pop() as string;
    if (seen.has(file)) continue;
    seen.add(file);
    const src = readFileSync(file, "utf8");
    for (const m of src.matchAll(/^import\s+(?!type\b)[^;]*?from\s+"(\.{1,2}\/[^"]+)"/gms)) {
      const spec = m[1] as string;
      const base = join(dirname(file), spec);
      stack.push(base.endsWith(".ts") ? base : `${base}.ts`);
    }
  }
  return new Set([...seen].map((f) => f.slice(resolve(".").length + 1)));
}

describe("the ensemble run path", () => {
  it("never loads the formula parser (ssa/expr.ts, mathjs) for a circuit without formulas: not from the kernels, the burn-in rule or the mean-field checks", () => {
    for (const entry of ["ssa/ensemble.ts", "ssa/burn-in.ts", "ssa/oscillation-checks.ts", "ssa/node/engine-task.ts", "ssa/node/run-steps.ts", "ssa/node/model-cache.ts"]) {
      const files = staticImports(entry);
      expect([...files].filter((f) => f === "ssa/expr.ts" || f === "ssa/model.ts"), entry).toEqual([]);
      for (const f of files) expect(readFileSync(f, "utf8"), f).not.toMatch(/from "mathjs/);
    }
  });

  it("findSteadyState solves a model once (the burn-in rule and the mean-field checks share it), and again for another tSettle", () => {
    const m = compileModel(JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8")));
    const a = findSteadyState(m);
    expect(findSteadyState(m)).toBe(a);
    const b = findSteadyState(m, { tSettle: 50 });
    expect(b).not.toBe(a);
    for (let i = 0; i < m.nSpecies; i++) expect(b.y[i]).toBeCloseTo(a.y[i] as number, 6);
  });
});
