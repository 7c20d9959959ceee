"use client";

import { signOut } from "next-auth/react";

export function SignOutButton() {
  return (
    <button type="button" onClick={() => signOut({ callbackUrl: "/signin" })} className="rounded-md border border-ink/20 px-3 py-1 text-ink hover:bg-paper">
      Sign out
    </button>
  );
}
