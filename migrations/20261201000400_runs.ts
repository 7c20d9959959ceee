import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("runs", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("lab_id").notNullable().references("labs.id").onDelete("CASCADE");
    t.bigInteger("version_id").notNullable().references("circuit_versions.id").onDelete("CASCADE");
    t.text("kind").notNullable(); // trace (deterministic) or ensemble (stochastic)
    t.text("method").notNullable();
    t.jsonb("settings").notNullable(); // t_end, dt, runs, burn_in, overrides, units
    t.bigInteger("seed").notNullable();
    t.text("status").notNullable().defaultTo("queued");
    t.integer("chunks_total").notNullable();
    t.integer("chunks_done").notNullable().defaultTo(0);
    t.text("error");
    t.text("engine_version").notNullable();
    t.bigInteger("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("started_at", { useTz: true });
    t.timestamp("finished_at", { useTz: true });
    t.timestamp("cancel_requested_at", { useTz: true });
    t.double("wall_s");
    t.bigInteger("events");
    t.index(["lab_id", "created_at"]);
    t.index(["version_id"]);
    t.index(["status"]);
  });
  await knex.raw(`alter table runs
    add constraint runs_kind_check check (kind in ('trace','ensemble')),
    add constraint runs_method_check check ((kind = 'trace' and method = 'ode') or (kind = 'ensemble' and method in ('ssa','tau'))),
    add constraint runs_status_check check (status in ('queued','running','succeeded','failed','cancelled')),
    add constraint runs_seed_check check (seed >= 0 and seed <= 9007199254740991),
    add constraint runs_chunks_check check (chunks_total >= 1 and chunks_done between 0 and chunks_total)`);

  // One row per finished chunk; the primary key makes a retried chunk land once.
  await knex.schema.createTable("run_chunks", (t) => {
    t.bigInteger("run_id").notNullable().references("runs.id").onDelete("CASCADE");
    t.integer("chunk_index").notNullable();
    t.integer("first_cell").notNullable();
    t.integer("cell_count").notNullable();
    t.binary("partial").notNullable(); // gzip of the engine's partial statistics (exact sums and histograms)
    t.bigInteger("events").notNullable();
    t.double("wall_s").notNullable();
    t.text("worker").notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(["run_id", "chunk_index"]);
  });
  await knex.raw("alter table run_chunks add constraint run_chunks_cells_check check (first_cell >= 0 and cell_count >= 1 and chunk_index >= 0)");

  // The merged result: the CLI `simulate` JSON, the mean-field trace and a few sample cells,
  // each gzip-compressed JSON (measured smaller than jsonb; see README), plus small scalars.
  await knex.schema.createTable("run_results", (t) => {
    t.bigInteger("run_id").primary().references("runs.id").onDelete("CASCADE");
    t.binary("summary_gz").notNullable();
    t.binary("trace_gz");
    t.binary("cells_gz");
    t.jsonb("noise").notNullable(); // per species: stationary mean/variance/cv/fano, period count/mean/cv
    t.integer("summary_bytes").notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("run_results");
  await knex.schema.dropTable("run_chunks");
  await knex.schema.dropTable("runs");
}
