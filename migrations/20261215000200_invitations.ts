import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("invitations", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.specificType("email", "citext").notNullable();
    t.text("role").notNullable();
    t.text("token_hash").notNullable().unique(); // sha256 of the token; the token itself is only in the e-mail
    t.bigInteger("invited_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true }).notNullable();
    t.timestamp("accepted_at", { useTz: true });
    t.bigInteger("accepted_by").references("users.id").onDelete("SET NULL");
    t.timestamp("revoked_at", { useTz: true });
    t.bigInteger("revoked_by").references("users.id").onDelete("SET NULL");
    t.index(["lab_id", "created_at"]);
  });
  await knex.raw(`alter table invitations
    add constraint invitations_role_check check (role in ('owner','modeler','reviewer')),
    add constraint invitations_hash_check check (token_hash ~ '^[0-9a-f]{64}$'),
    add constraint invitations_once_check check (accepted_at is null or revoked_at is null)`);
  // At most one open invitation per address and lab: inviting again replaces the open one.
  await knex.raw("create unique index invitations_open_unique on invitations (lab_id, email) where accepted_at is null and revoked_at is null");
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("invitations");
}
