import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // Every session token carries the version it was issued under; sign-out bumps it, so a copied
  // token stops working everywhere instead of living on until it expires.
  await knex.schema.alterTable("users", (t) => {
    t.integer("session_version").notNullable().defaultTo(1);
  });

  // Sign-in and sign-up limits, shared by every web process (in memory they would reset per
  // process and per restart). One row per (kind, key): a sign-in account (its e-mail, known or not),
  // a sign-in client address, or a sign-up client address.
  await knex.schema.createTable("auth_limits", (t) => {
    t.text("kind").notNullable();
    t.text("key").notNullable();
    // sign-in: attempts counted since the last success or quiet spell; sign-up: accounts in the window
    t.integer("count").notNullable().defaultTo(0);
    // sign-in: how many lockouts in a row (each one twice as long as the one before)
    t.integer("lockouts").notNullable().defaultTo(0);
    t.timestamp("window_started_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("last_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("locked_until", { useTz: true });
    t.primary(["kind", "key"]);
    t.index(["last_at"]);
  });
  await knex.raw("alter table auth_limits add constraint auth_limits_kind_check check (kind in ('signin_account','signin_address','signup_address'))");
  await knex.raw("alter table auth_limits add constraint auth_limits_count_check check (count >= 0 and lockouts >= 0)");
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("auth_limits");
  await knex.schema.alterTable("users", (t) => {
    t.dropColumn("session_version");
  });
}
