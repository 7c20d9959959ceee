import type { Knex } from "knex";

import { db } from "@/db/client";

/** Which counter a row of auth_limits is. */
export type LimitKind = "signin_account" | "signin_address" | "signup_address";

/** The verdict on one attempt: go ahead, or wait `retryAfterS` seconds. */
export type LimitVerdict = { allowed: true } | { allowed: false; retryAfterS: number; kind: LimitKind };

// A key with no attempt (and no lock running) for this long starts from nothing again.
const SIGNIN_QUIET_S = 15 * 60;
const SIGNIN_MAX_LOCK_S = 3600;
const SIGNUP_WINDOW_S = 3600;

interface LimitRow { kind: LimitKind; key: string; count: number; lockouts: number; windowStartedAt: Date; lastAt: Date; lockedUntil: Date | null }

async function lockRow(trx: Knex.Transaction, kind: LimitKind, key: string): Promise<LimitRow> {
  await trx("auth_limits").insert({ kind, key, count: 0, lockouts: 0 }).onConflict(["kind", "key"]).ignore();
  return trx<LimitRow>("auth_limits").where({ kind, key }).forUpdate().first() as Promise<LimitRow>;
}

const secondsBetween = (from: Date, to: Date) => (to.getTime() - from.getTime()) / 1000;

/** Seconds of the n-th lockout in a row (n ≥ 1): the first lasts `firstS`, each next one twice as long, at most an hour. */
export const lockoutSeconds = (n: number, firstS: number): number => Math.min(SIGNIN_MAX_LOCK_S, firstS * 2 ** Math.min(n - 1, 20));

/**
 * Counts one sign-in attempt against each key before the password is checked, so that
 * attempts sent in parallel cannot all slip in before the first failure is recorded. A key that
 * is locked refuses without counting; the attempt after `max` counted ones locks the key
 * (`lockS` seconds, doubling with each lockout in a row) and is refused too. After a lock one
 * more attempt is allowed, and a failure then locks again, for twice as long. A success clears
 * the account (`recordSignInSuccess`); 15 quiet minutes clear any key.
 */
export async function beginSignInAttempt(keys: { kind: LimitKind; key: string; max: number }[], lockS: number): Promise<LimitVerdict> {
  return db.transaction(async (trx) => {
    const now: Date = (await trx.raw("select clock_timestamp() as now")).rows[0].now;
    // Always the same lock order (the caller's), so two attempts never wait on each other in a circle.
    const rows: LimitRow[] = [];
    for (const k of keys) rows.push(await lockRow(trx, k.kind, k.key));
    for (const r of rows) {
      if (r.lockedUntil && r.lockedUntil > now) return { allowed: false, retryAfterS: Math.ceil(secondsBetween(now, r.lockedUntil)), kind: r.kind };
    }
    let verdict: LimitVerdict = { allowed: true };
    for (const [i, r] of rows.entries()) {
      const max = keys[i]!.max;
      const lastActive = r.lockedUntil && r.lockedUntil > r.lastAt ? r.lockedUntil : r.lastAt;
      const quiet = secondsBetween(lastActive, now) > SIGNIN_QUIET_S;
      let count = (quiet ? 0 : r.count) + 1;
      let lockouts = quiet ? 0 : r.lockouts;
      let lockedUntil: Date | null = quiet ? null : r.lockedUntil;
      if (count > max) {
        lockouts += 1;
        const s = lockoutSeconds(lockouts, lockS);
        lockedUntil = new Date(now.getTime() + s * 1000);
        count = max - 1; // once the lock is over, one more try before the next (longer) lock
        if (verdict.allowed) verdict = { allowed: false, retryAfterS: s, kind: r.kind };
      }
      await trx("auth_limits").where({ kind: r.kind, key: r.key }).update({ count, lockouts, lockedUntil, lastAt: now });
    }
    return verdict;
  });
}

/**
 * A sign-in succeeded: the account starts from nothing again; the address gives back the
 * attempt counted for it (it keeps its failures, or a valid account would launder a spray).
 */
export async function recordSignInSuccess(account: string, address: string): Promise<void> {
  await db("auth_limits").where({ kind: "signin_account", key: account }).del();
  await db("auth_limits").where({ kind: "signin_address", key: address }).update({ count: db.raw("greatest(count - 1, 0)") });
}

/**
 * Counts one sign-up from `address` in a fixed one-hour window; refused beyond `perHour`, with
 * the seconds until the window ends.
 */
export async function beginSignUp(address: string, perHour: number): Promise<LimitVerdict> {
  return db.transaction(async (trx) => {
    const now: Date = (await trx.raw("select clock_timestamp() as now")).rows[0].now;
    const r = await lockRow(trx, "signup_address", address);
    const fresh = r.count === 0 || secondsBetween(r.windowStartedAt, now) >= SIGNUP_WINDOW_S;
    const windowStartedAt = fresh ? now : r.windowStartedAt;
    const count = (fresh ? 0 : r.count) + 1;
    if (count > perHour) {
      return { allowed: false, retryAfterS: Math.max(1, Math.ceil(SIGNUP_WINDOW_S - secondsBetween(windowStartedAt, now))), kind: "signup_address" as const };
    }
    await trx("auth_limits").where({ kind: "signup_address", key: address }).update({ count, windowStartedAt, lastAt: now });
    return { allowed: true } as const;
  });
}

/** Forgets counters untouched for a day (nothing locked): they would decide nothing any more. */
export async function pruneAuthLimits(): Promise<void> {
  await db("auth_limits").whereRaw("last_at < now() - interval '1 day'").andWhere((q) => q.whereNull("lockedUntil").orWhereRaw("locked_until < now()")).del();
}
