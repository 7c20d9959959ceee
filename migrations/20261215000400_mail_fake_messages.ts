import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  // The local mail fake's inbox (development and tests): what it received, as received.
  await knex.schema.createTable("mail_fake_messages", (t) => {
    t.bigIncrements("id").primary();
    t.text("mail_from");
    t.specificType("rcpt_to", "text[]").notNullable();
    t.text("subject");
    t.text("text_body");
    t.text("raw").notNullable();
    t.timestamp("received_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(["received_at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("mail_fake_messages");
}
