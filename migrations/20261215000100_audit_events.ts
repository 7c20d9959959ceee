import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // Who did what in a lab, and when. Rows are only ever inserted; the actor's e-mail is copied
  // so the trail still reads after the account is deleted.
  await knex.schema.createTable("audit_events", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.bigInteger("actor_id").references("users.id").onDelete("SET NULL"); // null: the worker
    t.text("actor_email");
    t.text("action").notNullable(); // e.g. circuit.created, run.finished, member.role_changed
    t.text("target_type").notNullable();
    t.text("target_id");
    t.jsonb("details").notNullable().defaultTo("{}");
    // Set for events that a retry could record twice (run.finished): the second insert is ignored.
    t.text("dedupe_key").unique();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["lab_id", "created_at"]);
    t.index(["lab_id", "action"]);
    t.index(["lab_id", "actor_id"]);
  });
  await knex.raw("alter table audit_events add constraint audit_events_action_check check (action ~ '^[a-z_]+\\.[a-z_]+$')");
  await knex.raw(`
    create or replace function audit_events_append_only() returns trigger language plpgsql as $$
    begin raise exception 'audit events are append-only'; end $$;
    create trigger audit_events_no_update before update on audit_events
      for each row execute function audit_events_append_only();`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("audit_events");
  await knex.raw("drop function if exists audit_events_append_only()");
}
