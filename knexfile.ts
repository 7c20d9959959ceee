import type { Knex } from "knex";

// DATABASE_URL is set by `npm start` / `npm test` (the local cluster) or by the operator.
const config: Knex.Config = {
  client: "pg",
  connection: process.env.DATABASE_URL ?? "postgres://postgres@127.0.0.1:55432/burstwise",
  pool: { min: 0, max: Number(process.env.DB_POOL_MAX ?? 10) },
  migrations: { directory: "./migrations", extension: "ts", loadExtensions: [".ts"] },
  seeds: { directory: "./seeds", extension: "ts", loadExtensions: [".ts"] },
};

export default config;
