import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // Answers the engine computed for a circuit version (its analysis, its counts table). Versions
  // never change, so an answer holds for as long as the engine that computed it; a refusal for
  // size (the time budget ran out) holds until expires_at, since it depends on the server's load.
  await knex.schema.createTable("version_results", (t) => {
    t.bigInteger("version_id").notNullable().references("circuit_versions.id").onDelete("CASCADE");
    t.text("kind").notNullable();
    t.text("engine_version").notNullable();
    t.integer("status").notNullable(); // the HTTP status of the answer: 200, or 422 for a circuit it cannot answer
    t.text("body").notNullable(); // the JSON text exactly as served
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true });
    t.primary(["version_id", "kind", "engine_version"]);
  });
  await knex.raw(`alter table version_results
    add constraint version_results_kind_check check (kind in ('analysis','counts')),
    add constraint version_results_status_check check (status in (200, 422))`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("version_results");
}
