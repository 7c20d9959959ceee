import Link from "next/link";

import { Logo } from "@/app/_components/logo";
import { requirePageLab } from "@/lib/auth/page";

import { LabSwitcher } from "./_components/lab-switcher";
import { SectionNav } from "./_components/section-nav";
import { SignOutButton } from "./_components/sign-out-button";

export const dynamic = "force-dynamic";

export default async function LabLayout({ children, params }: { children: React.ReactNode; params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const { user, lab } = await requirePageLab(labId, `/labs/${labId}`);
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-ink/10 bg-white">
        <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-3">
          <Link href="/" className="text-ink no-underline"><Logo /></Link>
          <LabSwitcher labs={user.labs.map((l) => ({ id: l.id, name: l.name, role: l.role }))} current={lab.id} />
          <span data-testid="role-badge" className="rounded-full bg-moss-light px-2 py-0.5 text-xs font-medium text-moss">{lab.role}</span>
          <div className="ml-auto flex items-center gap-4 text-sm">
            <Link href="/account" className="text-ink-soft">{user.email}</Link>
            <SignOutButton />
          </div>
        </div>
        <SectionNav labId={lab.id} />
      </header>
      <main className="mx-auto w-full max-w-6xl flex-1 px-4 py-6">{children}</main>
    </div>
  );
}
