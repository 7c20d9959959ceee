import type { Metadata } from "next";
import Link from "next/link";

import { requirePageUser } from "@/lib/auth/page";

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
