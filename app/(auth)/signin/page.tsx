import type { Metadata } from "next";
import Link from "next/link";

import { toSafeRedirect } from "@/lib/view/safe-redirect";

import { SignInForm } from "./sign-in-form";

export const metadata: Metadata = { title: "Sign in" };

export default async function SignInPage({ searchParams }: { searchParams: Promise<{ callbackUrl?: string; error?: string }> }) {
  const { callbackUrl, error } = await searchParams;
  // Only same-origin paths are followed after sign-in (checked after URL parsing).
  const next = toSafeRedirect(callbackUrl, "/labs");
  return (
    <>
      <h1 className="text-2xl font-semibold">Sign in</h1>
      <SignInForm callbackUrl={next} initialError={error ? "E-mail or password is wrong." : undefined} />
      <p className="text-sm text-ink-soft">No account yet? <Link href="/signup">Create one</Link>; it comes with a lab of your own.</p>
    </>
  );
}
