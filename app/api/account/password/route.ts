import { getClientAddress } from "@/lib/auth/client-address";
import { recordSignInSuccess, requireSignInAllowed, SignInThrottled, describeWait } from "@/lib/auth/limits";
import { hashPassword, verifyPassword } from "@/lib/auth/password";
import { renewSessionCookie } from "@/lib/auth/session-renewal";
import { requireUser } from "@/lib/auth/session";
import { getUserById, replacePasswordHash } from "@/lib/data/users";
import { conflict, forbidden, handle, HttpError, readJson } from "@/lib/http";
import { appUrl, passwordChangedMail, sendMail } from "@/lib/mail";
import { PasswordChangeInput } from "@/lib/schemas/auth";

/**
 * Changes the signed-in user's password. The current password is checked like a sign-in (the
 * same attempt counters, so this cannot be used to guess it), every other session is signed out
 * (the session version is bumped with the new hash), and this browser gets a renewed cookie.
 * Personal API tokens stay valid: they are managed, and revoked, on their own.
 */
export const POST = handle("POST /api/account/password", async (req) => {
  const user = await requireUser(req);
  // A stolen token must not be able to take the account over.
  if (user.via === "token") throw forbidden("session: the password is changed from a signed-in session, not with an API token");
  const input = PasswordChangeInput.parse(await readJson(req, 16 * 1024));
  const row = await getUserById(user.id);
  if (!row) throw new HttpError(401, "session: sign in, or send a valid API token");
  const address = getClientAddress(req.headers);
  try {
    await requireSignInAllowed(row.email, address);
  } catch (e) {
    if (!(e instanceof SignInThrottled)) throw e;
    return Response.json(
      { error: `current_password: too many wrong passwords for this account or from your network address; try again in ${describeWait(e.retryAfterS)}`, retry_after_s: e.retryAfterS },
      { status: 429, headers: { "retry-after": String(e.retryAfterS) } },
    );
  }
  if (!(await verifyPassword(input.current_password, row.passwordHash))) throw forbidden("current_password: is not your current password");
  await recordSignInSuccess(row.email, address);
  if (input.new_password === input.current_password) throw new HttpError(422, "new_password: is the same as the current password");
  const sessionVersion = await replacePasswordHash(user.id, row.passwordHash, await hashPassword(input.new_password));
  if (sessionVersion === null) throw conflict("current_password: the password was changed meanwhile; sign in again with the new one");
  const renewed = await renewSessionCookie(req, sessionVersion);
  // Not awaited: the answer does not wait on the mail server.
  void sendMail(passwordChangedMail({ to: row.email, when: new Date(), accountLink: `${appUrl()}/account` }));
  return Response.json({ status: "changed", signed_in: renewed, other_sessions: "signed out", api_tokens: "unchanged" });
});
