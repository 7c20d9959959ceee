import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("circuits", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.text("name").notNullable();
    t.bigInteger("created_by").references("users.id").onDelete("SET NULL");
    t.timestamps(true, true);
    t.unique(["lab_id", "name"]);
  });
  await knex.raw("alter table circuits add constraint circuits_name_check check (length(name) between 1 and 200)");
  // Versions are immutable: editing a circuit adds a row; runs point at the row they ran.
  await knex.schema.createTable("circuit_versions", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("circuit_id").notNullable().references("circuits.id").onDelete("CASCADE");
    t.integer("number").notNullable();
    t.jsonb("circuit").notNullable(); // canonical JSON (keys sorted), as validated
    t.text("content_hash").notNullable(); // sha256 of the canonical JSON text
    t.text("source_format").notNullable().defaultTo("circuit");
    t.text("message");
    t.bigInteger("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.unique(["circuit_id", "number"]);
    t.unique(["circuit_id", "content_hash"]);
  });
  await knex.raw("alter table circuit_versions add constraint circuit_versions_number_check check (number >= 1)");
  await knex.raw("alter table circuit_versions add constraint circuit_versions_format_check check (source_format in ('circuit','sbml'))");
  await knex.raw("alter table circuit_versions add constraint circuit_versions_hash_check check (content_hash ~ '^[0-9a-f]{64}$')");
  await knex.raw(`
    create or replace function circuit_versions_immutable() returns trigger language plpgsql as $$
    begin raise exception 'circuit versions are immutable'; end $$;
    create trigger circuit_versions_no_update before update on circuit_versions
      for each row execute function circuit_versions_immutable();`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("circuit_versions");
  await knex.raw("drop function if exists circuit_versions_immutable()");
  await knex.schema.dropTable("circuits");
}
