import type { Knex } from "knex";

import { hashPassword } from "../lib/auth/password";

// Demo data (invented): the "Soil Sentinel" lab and its three demo users (CONTRACT.md §3).
export const DEMO_PASSWORD = "sentinel-demo";
export const DEMO_USERS = [
  { email: "owner@sentinel.example", name: "Olive Owner", role: "owner" },
  { email: "modeler@sentinel.example", name: "Milo Modeler", role: "modeler" },
  { email: "reviewer@sentinel.example", name: "Rhea Reviewer", role: "reviewer" },
] as const;

/** Loads the demo lab once; never writes into a database that holds real (non-demo) users. */
export async function seed(knex: Knex): Promise<void> {
  const real = await knex("users").where({ is_demo: false }).first("id");
  if (real) {
    console.log("[seed] the database holds real users: demo data not loaded");
    return;
  }
  if (await knex("labs").where({ is_demo: true }).first("id")) {
    console.log("[seed] demo lab already present");
    return;
  }
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  await knex.transaction(async (trx) => {
    const users = await trx("users")
      .insert(DEMO_USERS.map((u) => ({ email: u.email, name: u.name, password_hash: passwordHash, is_demo: true })))
      .returning(["id", "email"]);
    const ownerId = users.find((u) => u.email === DEMO_USERS[0].email)!.id;
    const [lab] = await trx("labs").insert({ name: "Soil Sentinel", created_by: ownerId, is_demo: true }).returning(["id"]);
    await trx("memberships").insert(
      DEMO_USERS.map((u) => ({ lab_id: lab.id, user_id: users.find((r) => r.email === u.email)!.id, role: u.role })),
    );
  });
  console.log("[seed] demo lab Soil Sentinel loaded (demo credentials: password sentinel-demo)");
}
