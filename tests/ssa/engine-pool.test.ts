import { readFileSync } from "node:fs";
import { join } from "node:path";

import { afterAll, describe, expect, it } from "vitest";

import { EngineBusyError, EngineLimitError, EnginePool } from "@/ssa/node/engine-pool";
import type { Circuit } from "@/ssa/types";

const ring: Circuit = JSON.parse(readFileSync("examples/ring-timer.circuit.json", "utf8"));

/** ∅ → S0 → … → S(n−1) → ∅: its analysis takes seconds for a few hundred species. */
function chain(n: number): Circuit {
  const species = Array.from({ length: n }, (_, i) => ({ id: `S${i}`, initial: 1 }));
  const reactions: Circuit["reactions"] = [{ id: "make", products: { S0: 1 }, rate: { law: "mass_action", k: 1 } }];
  for (let i = 1; i < n; i++) reactions.push({ id: `c${i}`, reactants: { [`S${i - 1}`]: 1 }, products: { [`S${i}`]: 1 }, rate: { law: "mass_action", k: 1 } });
  reactions.push({ id: "lose", reactants: { [`S${n - 1}`]: 1 }, rate: { law: "mass_action", k: 0.1 } });
  return { format: "burstwise.circuit/1", name: "chain", units: { time: "min", amount: "nM" }, volume_fL: 1, species, parameters: {}, reactions };
}

const pool = new EnginePool({ filename: join(process.cwd(), "ssa/node/engine-task.ts"), threads: 1, maxQueue: 1, maxWaitMs: 60_000, maxHeapMb: 512 });
afterAll(() => pool.close());

describe("EnginePool", () => {
  it("pool.run(analysis) answers with the JSON text of analyze() computed on a thread", async () => {
    const { analyze } = await import("@/ssa/analyze");
    const { compileModel } = await import("@/ssa/model");
    const out = await pool.run({ kind: "analysis", circuit: ring }, 20_000);
    expect(out).toEqual({ ok: true, json: JSON.stringify(analyze(compileModel(ring))) });
  });

  it("pool.run ends a task past its budget (EngineLimitError), refuses one beyond the queue at once (EngineBusyError), and the queued one still runs", async () => {
    const t0 = performance.now();
    const slow = pool.run({ kind: "analysis", circuit: chain(400) }, 1000).catch((e: unknown) => e);
    const queued = pool.run({ kind: "counts", circuit: ring }, 20_000);
    await expect(pool.run({ kind: "counts", circuit: ring }, 20_000)).rejects.toBeInstanceOf(EngineBusyError);
    const e = await slow;
    expect(e).toBeInstanceOf(EngineLimitError);
    expect((e as EngineLimitError).message).toBe("took longer than 1 s");
    expect(performance.now() - t0).toBeLessThan(10_000); // terminated, not run to its end (15 s on a loaded machine)
    expect((await queued).ok).toBe(true);
    expect(pool.load).toEqual({ running: 0, waiting: 0 });
  });

  it("an input error comes back as an outcome naming the error class", async () => {
    const bad = { ...ring, reactions: [{ id: "r", reactants: { Q: 1 }, rate: { law: "mass_action", k: 1 } }] } as Circuit;
    const out = await pool.run({ kind: "counts", circuit: bad }, 20_000);
    expect(out).toMatchObject({ ok: false, name: "ModelInputError", message: 'reactions[0].reactants.Q: unknown species "Q"' });
  });
});
