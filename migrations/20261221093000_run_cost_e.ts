import type { Knex } from "knex";

// The expected work of each run, so a lab's and a user's queued work can be bounded by a sum
// (lib/run-budget.ts): cell-events = cells × (expected reaction events per cell + grid points).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("runs", (t) => {
    t.double("cost").notNullable().defaultTo(0);
  });
  // Runs already waiting when this lands get a lower bound (their grid alone), not zero, so they still count.
  await knex.raw(`update runs set cost = (settings->>'runs')::float8 * (floor((settings->>'t_end')::float8 / (settings->>'dt')::float8) + 1)
    where status in ('queued', 'running')`);
  await knex.raw("alter table runs add constraint runs_cost_check check (cost >= 0 and cost < 'infinity'::float8)");
  // The budget sums read only unfinished runs, per lab and per creator.
  await knex.raw("create index runs_active_lab_idx on runs (lab_id) where status in ('queued', 'running')");
  await knex.raw("create index runs_active_creator_idx on runs (created_by) where status in ('queued', 'running')");
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("drop index if exists runs_active_creator_idx");
  await knex.raw("drop index if exists runs_active_lab_idx");
  await knex.schema.alterTable("runs", (t) => {
    t.dropColumn("cost");
  });
}
