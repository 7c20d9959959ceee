import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // A comparison: two or more designs run with the same settings, and their noise table.
  await knex.schema.createTable("comparisons", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.text("name").notNullable();
    t.text("description");
    t.text("kind").notNullable(); // designs (listed one by one) or sweep (generated along one or two parameters)
    t.jsonb("sweep"); // the sweep as asked for: base version, overrides, axes
    t.jsonb("settings").notNullable(); // method, t_end, dt, runs, burn_in
    t.bigInteger("seed").notNullable(); // design i runs with seed (common_seed ? seed : seed + i)
    t.boolean("common_seed").notNullable().defaultTo(false);
    t.text("status").notNullable().defaultTo("draft");
    t.text("error");
    t.jsonb("results"); // the noise table with bootstrap intervals, once every design run has succeeded
    t.bigInteger("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("launched_at", { useTz: true });
    t.timestamp("finished_at", { useTz: true });
    t.index(["lab_id", "created_at"]);
  });
  await knex.raw(`alter table comparisons
    add constraint comparisons_kind_check check (kind in ('designs','sweep')),
    add constraint comparisons_status_check check (status in ('draft','running','succeeded','failed','cancelled')),
    add constraint comparisons_name_check check (length(name) between 1 and 200),
    add constraint comparisons_seed_check check (seed >= 0 and seed <= 9007199254740991)`);

  // One row per design, in the comparison's order; run_id is the design's latest ensemble.
  await knex.schema.createTable("comparison_designs", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("comparison_id").notNullable().references("comparisons.id").onDelete("CASCADE");
    t.integer("position").notNullable();
    t.text("label").notNullable();
    t.bigInteger("version_id").notNullable().references("circuit_versions.id").onDelete("CASCADE");
    t.jsonb("overrides").notNullable().defaultTo("{}");
    t.jsonb("sweep_values"); // the swept parameters' values, e.g. {"k": 5}
    t.bigInteger("run_id").references("runs.id").onDelete("SET NULL");
    t.unique(["comparison_id", "position"]);
    t.index(["run_id"]);
  });
  await knex.raw("alter table comparison_designs add constraint comparison_designs_position_check check (position >= 0)");

  // Per-cell sums of a finished ensemble (gzip of a Float64Array, ssa/cell-stats.ts): the
  // bootstrap over cells reads them. About 5 numbers per cell and species.
  await knex.schema.alterTable("run_results", (t) => {
    t.binary("cell_stats_gz");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("run_results", (t) => {
    t.dropColumn("cell_stats_gz");
  });
  await knex.schema.dropTable("comparison_designs");
  await knex.schema.dropTable("comparisons");
}
