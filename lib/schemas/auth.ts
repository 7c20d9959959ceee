import { z } from "zod";

export const Email = z.string().trim().toLowerCase().max(254).email("not a valid e-mail address");

/** A password as sign-up and a password change take it (not trimmed: every character counts). */
export const Password = z.string().min(10, "at least 10 characters").max(200, "at most 200 characters");

export const SignUpInput = z.object({
  email: Email,
  name: z.string().trim().min(1, "is required").max(120, "at most 120 characters"),
  password: Password,
  labName: z.string().trim().min(1).max(120, "at most 120 characters").optional(),
}).strict();
export type SignUpInput = z.infer<typeof SignUpInput>;

export const SignInInput = z.object({ email: Email, password: z.string().min(1).max(200) });

/** POST /api/account/password: the password in use now, and the one to use from now on. */
export const PasswordChangeInput = z.object({
  current_password: z.string().min(1, "is required").max(200, "at most 200 characters"),
  new_password: Password,
}).strict();
export type PasswordChangeInput = z.infer<typeof PasswordChangeInput>;

export const Role = z.enum(["owner", "modeler", "reviewer"]);
export type Role = z.infer<typeof Role>;

export const LabRename = z.object({ name: z.string().trim().min(1, "is required").max(120, "at most 120 characters") }).strict();
export const MemberAdd = z.object({ email: Email, role: Role }).strict();
export const MemberRole = z.object({ role: Role }).strict();
