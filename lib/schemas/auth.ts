import { z } from "zod";

export const Email = z.string().trim().toLowerCase().max(254).email("not a valid e-mail address");

export const SignUpInput = z.object({
  email: Email,
  name: z.string().trim().min(1, "is required").max(120, "at most 120 characters"),
  password: z.string().min(10, "at least 10 characters").max(200, "at most 200 characters"),
  labName: z.string().trim().min(1).max(120, "at most 120 characters").optional(),
}).strict();
export type SignUpInput = z.infer<typeof SignUpInput>;

export const SignInInput = z.object({ email: Email, password: z.string().min(1).max(200) });

export const Role = z.enum(["owner", "modeler", "reviewer"]);
export type Role = z.infer<typeof Role>;

export const LabRename = z.object({ name: z.string().trim().min(1, "is required").max(120, "at most 120 characters") }).strict();
export const MemberAdd = z.object({ email: Email, role: Role }).strict();
export const MemberRole = z.object({ role: Role }).strict();
