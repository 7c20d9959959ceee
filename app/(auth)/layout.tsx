import Link from "next/link";

import { Logo } from "@/app/_components/logo";

export default function AuthLayout({ children }: { children: React.ReactNode }) {
  return (
    <main className="mx-auto flex min-h-screen max-w-md flex-col justify-center gap-6 px-6 py-12">
      <Link href="/" className="text-ink no-underline"><Logo className="text-xl" /></Link>
      {children}
    </main>
  );
}
