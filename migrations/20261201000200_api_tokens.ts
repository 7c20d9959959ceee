import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("api_tokens", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("CASCADE");
    t.text("name").notNullable();
    t.text("token_hash").notNullable().unique(); // sha256 of the token; the token itself is never stored
    t.text("prefix").notNullable(); // first characters, so the user can tell tokens apart
    t.timestamp("last_used_at", { useTz: true });
    t.timestamp("revoked_at", { useTz: true });
    t.timestamps(true, true);
    t.index(["user_id"]);
  });
  await knex.raw("alter table api_tokens add constraint api_tokens_name_check check (length(name) between 1 and 80)");
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("api_tokens");
}
