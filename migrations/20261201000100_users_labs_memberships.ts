import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw("create extension if not exists citext");
  await knex.schema.createTable("users", (t) => {
    t.bigIncrements("id").primary();
    t.specificType("email", "citext").notNullable().unique();
    t.text("name").notNullable();
    t.text("password_hash").notNullable();
    t.boolean("is_demo").notNullable().defaultTo(false);
    t.timestamps(true, true);
  });
  await knex.schema.createTable("labs", (t) => {
    t.bigIncrements("id").primary();
    t.text("name").notNullable();
    t.bigInteger("created_by").references("users.id").onDelete("SET NULL");
    t.boolean("is_demo").notNullable().defaultTo(false);
    t.timestamps(true, true);
  });
  await knex.schema.createTable("memberships", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("CASCADE");
    t.text("role").notNullable();
    t.timestamps(true, true);
    t.unique(["lab_id", "user_id"]);
    t.index(["user_id"]);
  });
  await knex.raw("alter table memberships add constraint memberships_role_check check (role in ('owner','modeler','reviewer'))");
  await knex.raw("alter table labs add constraint labs_name_check check (length(name) between 1 and 120)");
  await knex.raw("alter table users add constraint users_name_check check (length(name) between 1 and 120)");
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("memberships");
  await knex.schema.dropTable("labs");
  await knex.schema.dropTable("users");
}
