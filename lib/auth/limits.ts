import { beginSignInAttempt, recordSignInSuccess, type LimitKind } from "@/lib/data/auth-limits";
import { env } from "@/lib/env";

/** "30 s", "4 min", "1 h": a wait in words for a refusal. */
export function describeWait(seconds: number): string {
  if (seconds < 120) return `${Math.max(1, Math.ceil(seconds))} s`;
  if (seconds < 7200) return `${Math.ceil(seconds / 60)} min`;
  return `${Math.ceil(seconds / 3600)} h`;
}

/** Thrown from next-auth's authorize when a sign-in is refused for now; the route answers 429. */
export class SignInThrottled extends Error {
  static readonly PREFIX = "email: too many sign-in attempts";
  constructor(readonly retryAfterS: number, kind: LimitKind) {
    super(`${SignInThrottled.PREFIX} ${kind === "signin_address" ? "from your network address" : "for this account"}; try again in ${describeWait(retryAfterS)}`);
  }
}

/**
 * Counts a sign-in attempt for the e-mail (whether or not it has an account) and the client
 * address before the password is checked.
 * @throws SignInThrottled when either is locked for now.
 */
export async function requireSignInAllowed(email: string, address: string): Promise<void> {
  const verdict = await beginSignInAttempt([
    { kind: "signin_account", key: email, max: env.SIGNIN_MAX_FAILURES },
    { kind: "signin_address", key: address, max: env.SIGNIN_ADDRESS_MAX_FAILURES },
  ], env.SIGNIN_LOCK_S);
  if (!verdict.allowed) throw new SignInThrottled(verdict.retryAfterS, verdict.kind);
}

export { recordSignInSuccess };

/**
 * The 429 for a credentials callback that next-auth answered with a SignInThrottled refusal
 * (next-auth turns a throw in authorize into a 401 redirect naming the message), or null.
 */
export async function toThrottledResponse(res: Response): Promise<Response | null> {
  if (res.status !== 401) return null;
  const isJson = (res.headers.get("content-type") ?? "").includes("application/json");
  const target = isJson ? ((await res.clone().json().catch(() => null)) as { url?: string } | null)?.url : res.headers.get("location");
  if (!target) return null;
  let message: string | null;
  try {
    message = new URL(target, "http://burstwise.invalid").searchParams.get("error");
  } catch {
    return null;
  }
  if (!message?.startsWith(SignInThrottled.PREFIX)) return null;
  const m = /in (\d+) (s|min|h)$/.exec(message);
  const retryAfterS = m ? Number(m[1]) * (m[2] === "h" ? 3600 : m[2] === "min" ? 60 : 1) : 60;
  // `url` stays: next-auth's client signIn() reads the error from it.
  return Response.json({ error: message, retry_after_s: retryAfterS, url: target }, { status: 429, headers: { "retry-after": String(retryAfterS) } });
}
