import knex, { type Knex } from "knex";

import { testEnv } from "./env";

/** A plain Knex on the test database, for checking what routes wrote (snake_case columns). */
export function testDb(): Knex {
  return knex({ client: "pg", connection: testEnv().databaseUrl, pool: { min: 0, max: 2 } });
}
