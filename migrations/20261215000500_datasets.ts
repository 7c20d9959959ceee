import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // Measured data: the file exactly as uploaded (downloadable byte for byte) beside the
  // values parsed from it and their statistics.
  await knex.schema.createTable("datasets", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.text("name").notNullable();
    t.text("kind").notNullable(); // series (time column + reporters) or snapshot (one value per cell)
    t.text("description");
    t.text("file_name").notNullable();
    t.text("content_type").notNullable();
    t.integer("size_bytes").notNullable();
    t.text("sha256").notNullable();
    t.binary("original").notNullable();
    t.jsonb("units").notNullable(); // time_unit, amount_unit, molecules_per_unit
    t.jsonb("parsed").notNullable(); // columns and values, as numbers in the stated units
    t.jsonb("stats").notNullable(); // per reporter: n, mean, sd, cv, fano in molecules
    t.bigInteger("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.unique(["lab_id", "name"]);
  });
  await knex.raw(`alter table datasets
    add constraint datasets_kind_check check (kind in ('series','snapshot')),
    add constraint datasets_name_check check (length(name) between 1 and 200),
    add constraint datasets_size_check check (size_bytes = octet_length(original) and size_bytes > 0),
    add constraint datasets_sha_check check (sha256 ~ '^[0-9a-f]{64}$')`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("datasets");
}
