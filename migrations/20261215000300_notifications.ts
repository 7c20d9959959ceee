import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // Each member's own choice, per lab: e-mail when a run finishes (off, own runs, every run).
  await knex.schema.createTable("notification_settings", (t) => {
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("CASCADE");
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.text("runs").notNullable().defaultTo("off");
    t.timestamps(true, true);
    t.primary(["user_id", "lab_id"]);
  });
  await knex.raw("alter table notification_settings add constraint notification_settings_runs_check check (runs in ('off','mine','lab'))");

  // One row per (subject, recipient), inserted before the e-mail is sent: a retried or
  // duplicated hook finds the row and sends nothing (at most one e-mail each).
  await knex.schema.createTable("notifications", (t) => {
    t.bigIncrements("id").primary();
    t.text("subject_kind").notNullable(); // run, comparison
    t.bigInteger("subject_id").notNullable();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("CASCADE");
    t.text("email").notNullable();
    t.text("status").notNullable().defaultTo("claimed");
    t.text("error");
    t.text("message_id");
    t.timestamp("claimed_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("sent_at", { useTz: true });
    t.unique(["subject_kind", "subject_id", "user_id"]);
    t.index(["user_id", "claimed_at"]);
  });
  await knex.raw(`alter table notifications
    add constraint notifications_kind_check check (subject_kind in ('run','comparison')),
    add constraint notifications_status_check check (status in ('claimed','sent','failed'))`);

  // Subjects whose recipients have all been handled; the worker's sweep looks for finished
  // runs missing here (a worker killed between finishing a run and notifying).
  await knex.schema.createTable("notified_subjects", (t) => {
    t.text("subject_kind").notNullable();
    t.bigInteger("subject_id").notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(["subject_kind", "subject_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("notified_subjects");
  await knex.schema.dropTable("notifications");
  await knex.schema.dropTable("notification_settings");
}
