// The database pool's lifecycle, for processes that end (the worker, the mail fake, seeds):
// they close the pool through lib/data, so only lib/data names db/ (DEVELOPERS.md).
import { closeDb, db, openDb } from "@/db/client";

export { closeDb, openDb };

/** Liveness: one round trip to the database (the health route). @throws when it is unreachable. */
export async function pingDatabase(): Promise<void> {
  await db.raw("select 1");
}

/**
 * Runs `work` with the pool open and closes it after, even on failure: each seed runs in the
 * knex CLI's process, and an earlier seed may have closed the shared pool.
 */
export async function withOpenPool<T>(work: () => Promise<T>): Promise<T> {
  openDb();
  try {
    return await work();
  } finally {
    await closeDb();
  }
}
