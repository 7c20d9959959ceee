// The demo seeds (`npm start`, and `npm test` on its throwaway database) write through lib/data:
// what they load, that a second run adds nothing, and that they never touch a database with
// real users.
import { spawnSync } from "node:child_process";

import { afterAll, describe, expect, it } from "vitest";

import { testDb } from "../support/db";
import { testEnv } from "../support/env";

const db = testDb();
afterAll(() => db.destroy());

/** Runs `knex seed:run` against the test database, as scripts/lib/bootstrap.mjs does. */
function runSeeds(databaseUrl = testEnv().databaseUrl): { status: number | null; output: string } {
  const r = spawnSync("npx", ["knex", "seed:run"], {
    env: { ...process.env, DATABASE_URL: databaseUrl, NODE_OPTIONS: "--import tsx" }, encoding: "utf8", timeout: 120_000,
  });
  return { status: r.status, output: `${r.stdout}${r.stderr}` };
}

/** What the demo lab holds, counted. */
async function demoCounts() {
  const lab = await db("labs").where({ is_demo: true, name: "Soil Sentinel" }).first("id");
  const count = async (q: Promise<{ n: string }[]>) => Number((await q)[0]!.n);
  return {
    lab: !!lab,
    members: await count(db("memberships").where({ lab_id: lab?.id ?? 0 }).count({ n: "*" }) as never),
    datasets: await count(db("datasets").where({ lab_id: lab?.id ?? 0 }).count({ n: "*" }) as never),
    comparisons: await count(db("comparisons").where({ lab_id: lab?.id ?? 0 }).count({ n: "*" }) as never),
    runs: await count(db("runs as r").join("circuit_versions as v", "v.id", "r.version_id").join("circuits as c", "c.id", "v.circuit_id")
      .where({ "c.lab_id": lab?.id ?? 0 }).count({ n: "*" }) as never),
  };
}

describe("demo seeds", () => {
  it("loaded the demo lab: three members with their roles, the invented dataset, the comparison and the reporter's run", async () => {
    const lab = await db("labs").where({ is_demo: true, name: "Soil Sentinel" }).first("id", "created_by");
    expect(lab).toBeTruthy();
    const members = await db("memberships as m").join("users as u", "u.id", "m.user_id").where({ "m.lab_id": lab.id })
      .orderBy("u.email").select("u.email", "m.role", "u.is_demo", "u.password_hash");
    expect(members.map((m) => [m.email, m.role, m.is_demo])).toEqual([
      ["modeler@sentinel.example", "modeler", true], ["owner@sentinel.example", "owner", true], ["reviewer@sentinel.example", "reviewer", true],
    ]);
    expect(members.every((m) => typeof m.password_hash === "string" && m.password_hash.length > 20)).toBe(true);
    const owner = await db("users").where({ email: "owner@sentinel.example" }).first("id");
    expect(String(lab.created_by)).toBe(String(owner.id));

    const dataset = await db("datasets").where({ lab_id: lab.id, name: "Reporter snapshot (invented)" })
      .first("kind", "size_bytes", "original", "units", "stats", "parsed", "created_by");
    expect(dataset.kind).toBe("snapshot");
    expect(dataset.size_bytes).toBe(dataset.original.length);
    expect(dataset.units).toEqual({ time_unit: null, amount_unit: "a.u.", molecules_per_unit: 2.5 });
    expect(dataset.parsed.values[0]).toHaveLength(400);
    expect(dataset.stats.columns[0].n).toBe(400);
    expect(String(dataset.created_by)).toBe(String(owner.id));

    // Other test files may add to the demo lab, so look for the seeds' own rows by name.
    const comparison = await db("comparisons").where({ lab_id: lab.id, name: "Ring timer: which design keeps time best?" }).first("id");
    expect(comparison).toBeTruthy();
    expect(Number((await db("comparison_designs").where({ comparison_id: comparison.id }).count({ n: "*" }))[0]!.n)).toBe(4);
    const reporterRuns = await db("runs as r").join("circuit_versions as v", "v.id", "r.version_id").join("circuits as c", "c.id", "v.circuit_id")
      .where({ "c.lab_id": lab.id, "c.name": "Constitutive reporter (noise baseline)" }).select("r.settings", "r.seed");
    expect(reporterRuns.length).toBeGreaterThanOrEqual(1);
    expect(reporterRuns[0]!.settings).toMatchObject({ runs: 1000, t_end: 1200 });
    expect(Number(reporterRuns[0]!.seed)).toBe(20261201);
  });

  it("a second seed run adds nothing (each seed loads once)", async () => {
    const before = await demoCounts();
    const r = runSeeds();
    expect(r.status, r.output).toBe(0);
    // Either the demo is there already, or other test files have created real users by now.
    expect(r.output).toMatch(/demo lab already present|holds real users/);
    expect(await demoCounts()).toEqual(before);
  });
});
