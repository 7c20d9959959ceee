import type { Metadata } from "next";
import Link from "next/link";

import { requirePageUser } from "@/lib/auth/page";

import { PasswordForm } from "./password-form";
import { TokenManager } from "./token-manager";

export const metadata: Metadata = { title: "Account" };
export const dynamic = "force-dynamic";

export default async function AccountPage() {
  const user = await requirePageUser("/account");
  return (
    <main className="mx-auto flex max-w-3xl flex-col gap-6 px-6 py-10">
      <Link href="/labs">← Back to your lab</Link>
      <h1 className="text-2xl font-semibold">{user.name}</h1>
      <p className="text-ink-soft">{user.email} · member of {user.labs.map((l) => `${l.name} (${l.role})`).join(", ") || "no lab"}</p>
      <section aria-labelledby="password-heading" className="flex flex-col gap-3">
        <h2 id="password-heading" className="text-lg font-semibold">Password</h2>
        <p className="text-sm text-ink-soft">
          Changing your password signs out every other browser and device signed in to your account; this one stays signed
          in. Your personal API tokens keep working: revoke any you no longer trust below. You get an e-mail about the change.
        </p>
        <PasswordForm />
      </section>
      <section className="flex flex-col gap-3">
        <h2 className="text-lg font-semibold">Personal API tokens</h2>
        <p className="text-sm text-ink-soft">
          Scripts send a token as <code>Authorization: Bearer &lt;token&gt;</code>. A token carries your roles and nothing more;
          it is shown once, stored only as a hash, and can be revoked at any time.
        </p>
        <TokenManager />
      </section>
    </main>
  );
}
