import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // Difference tests of a succeeded comparison ("is B less noisy than A?" for one species). A
  // succeeded comparison can no longer be launched again, so its ensembles, and therefore a test's
  // answer, never change: stored once per engine version, served as is afterwards.
  await knex.schema.createTable("comparison_tests", (t) => {
    t.bigInteger("comparison_id").notNullable().references("comparisons.id").onDelete("CASCADE");
    t.bigInteger("design_a").notNullable().references("comparison_designs.id").onDelete("CASCADE");
    t.bigInteger("design_b").notNullable().references("comparison_designs.id").onDelete("CASCADE");
    t.text("species").notNullable();
    t.text("engine_version").notNullable();
    t.text("body").notNullable(); // the JSON text exactly as served
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(["comparison_id", "design_a", "design_b", "species", "engine_version"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("comparison_tests");
}
