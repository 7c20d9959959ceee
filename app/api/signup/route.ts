import { getClientAddress } from "@/lib/auth/client-address";
import { describeWait } from "@/lib/auth/limits";
import { beginSignUp } from "@/lib/data/auth-limits";
import { createUserWithLab } from "@/lib/data/users";
import { env } from "@/lib/env";
import { handle, readJson } from "@/lib/http";
import { appUrl, sendMail, signUpAttemptMail } from "@/lib/mail";
import { SignUpInput } from "@/lib/schemas/auth";

// The same answer whether the address was new or already had an account (whose owner is told by
// e-mail), so sign-up cannot be used to find out who has an account.
const ACCEPTED = {
  status: "accepted",
  message: "Sign in with this e-mail and password. If the address already had an account, nothing was changed and its owner was e-mailed.",
};

/**
 * Creates an account with a lab of its own. At most SIGNUP_PER_ADDRESS_PER_H sign-ups per client
 * address and hour (429 beyond), counted for taken addresses too.
 */
export const POST = handle("POST /api/signup", async (req) => {
  const input = SignUpInput.parse(await readJson(req, 16 * 1024));
  const verdict = await beginSignUp(getClientAddress(req.headers), env.SIGNUP_PER_ADDRESS_PER_H);
  if (!verdict.allowed) {
    return Response.json(
      { error: `signup: too many accounts created from your network address; try again in ${describeWait(verdict.retryAfterS)}` },
      { status: 429, headers: { "retry-after": String(verdict.retryAfterS) } },
    );
  }
  const r = await createUserWithLab(input);
  if (!r.created) {
    // Not awaited: waiting on the mail server would make this answer slower than a new account's.
    void sendMail(signUpAttemptMail({ to: input.email, signInLink: `${appUrl()}/signin` }));
  }
  return Response.json(ACCEPTED, { status: 202 });
});
