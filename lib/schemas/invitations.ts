import { z } from "zod";

import { IdField } from "@/lib/schemas/api";
import { Email, Role, SignUpInput } from "@/lib/schemas/auth";

/** POST /api/labs/:id/invitations */
export const InvitationCreate = z.strictObject({ email: Email, role: Role });
export type InvitationCreate = z.infer<typeof InvitationCreate>;

/**
 * The token in an invitation link: 32 random bytes, base64url (43 characters). Anything else
 * is refused before the database is asked.
 */
export const InvitationToken = z.string().regex(/^[A-Za-z0-9_-]{43}$/, "this invitation link is not valid (copy the whole link from the e-mail)");

/**
 * POST /api/invitations/:token/accept: empty when the invitee is signed in; a name and a
 * password when the invitee has no account yet (the account gets the invited e-mail).
 */
export const InvitationAccept = z.strictObject({
  name: SignUpInput.shape.name.optional(),
  password: SignUpInput.shape.password.optional(),
});
export type InvitationAccept = z.infer<typeof InvitationAccept>;

/** The new-account form on the invite page (checked in the browser and again by the route). */
export const InviteeAccount = SignUpInput.pick({ name: true, password: true }).strict();

/** PUT /api/me/notifications: who gets e-mail when a run finishes, per lab. */
export const RunNotifyScope = z.enum(["off", "mine", "lab"]);
export type RunNotifyScope = z.infer<typeof RunNotifyScope>;
export const NotificationSettingsUpdate = z.strictObject({
  lab_id: IdField,
  runs: RunNotifyScope,
});
