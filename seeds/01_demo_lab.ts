import { hashPassword } from "../lib/auth/password";
import { createDemoLab, getDemoLab, hasRealUsers } from "../lib/data/demo";
import { withOpenPool } from "../lib/data/pool";

// Demo data (invented): the "Soil Sentinel" lab and its three demo users (CONTRACT.md §3).
export const DEMO_PASSWORD = "sentinel-demo";
export const DEMO_USERS = [
  { email: "owner@sentinel.example", name: "Olive Owner", role: "owner" },
  { email: "modeler@sentinel.example", name: "Milo Modeler", role: "modeler" },
  { email: "reviewer@sentinel.example", name: "Rhea Reviewer", role: "reviewer" },
] as const;

/**
 * Loads the demo lab once; never writes into a database that holds real (non-demo) users.
 * Through lib/data, like every other writer (the knex connection the CLI passes is not used).
 */
export async function seed(): Promise<void> {
  await withOpenPool(async () => {
    if (await hasRealUsers()) {
      console.log("[seed] the database holds real users: demo data not loaded");
      return;
    }
    if (await getDemoLab()) {
      console.log("[seed] demo lab already present");
      return;
    }
    await createDemoLab(DEMO_USERS, await hashPassword(DEMO_PASSWORD));
    console.log("[seed] demo lab Soil Sentinel loaded (demo credentials: password sentinel-demo)");
  });
}
