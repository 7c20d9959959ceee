import type { DefaultSession } from "next-auth";

import type { LabMembership } from "@/lib/data/users";

declare module "next-auth" {
  interface Session {
    user?: DefaultSession["user"] & { id: string; labs: LabMembership[] };
  }
}
declare module "next-auth/jwt" {
  interface JWT { uid?: string }
}
