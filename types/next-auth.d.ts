import type { DefaultSession } from "next-auth";

import type { LabMembership } from "@/lib/data/users";

declare module "next-auth" {
  interface Session {
    user?: DefaultSession["user"] & { id: string; labs: LabMembership[] };
  }
  interface User { sessionVersion?: number }
}
declare module "next-auth/jwt" {
  /** uid: the user's id; sv: the user's session version when the token was issued. */
  interface JWT { uid?: string; sv?: number }
}
