import type { Knex } from "knex";

import { env } from "./lib/env";

// DATABASE_URL is set by `npm start` / `npm test` (the local cluster) or by the operator;
// lib/env.ts parses it (and DB_POOL_MAX) like every other setting.
const config: Knex.Config = {
  client: "pg",
  connection: env.DATABASE_URL,
  pool: { min: 0, max: env.DB_POOL_MAX },
  migrations: { directory: "./migrations", extension: "ts", loadExtensions: [".ts"] },
  seeds: { directory: "./seeds", extension: "ts", loadExtensions: [".ts"] },
};

export default config;
