import type { Knex } from "knex";

// Warnings that travel with results (ssa/warnings.ts, `EngineWarning[]`): a version keeps the
// warnings of the SBML import that made it, a finished run the warnings of its summary (import
// warnings first), so the run's JSON can carry them without unpacking the stored summary.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("circuit_versions", (t) => {
    t.jsonb("import_warnings").notNullable().defaultTo(knex.raw("'[]'::jsonb"));
  });
  await knex.schema.alterTable("run_results", (t) => {
    t.jsonb("warnings").notNullable().defaultTo(knex.raw("'[]'::jsonb"));
  });
  await knex.raw(`alter table circuit_versions add constraint circuit_versions_import_warnings_check check (jsonb_typeof(import_warnings) = 'array')`);
  await knex.raw(`alter table run_results add constraint run_results_warnings_check check (jsonb_typeof(warnings) = 'array')`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("run_results", (t) => t.dropColumn("warnings"));
  await knex.schema.alterTable("circuit_versions", (t) => t.dropColumn("import_warnings"));
}
