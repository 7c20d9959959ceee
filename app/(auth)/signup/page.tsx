import type { Metadata } from "next";
import Link from "next/link";

import { SignUpForm } from "./sign-up-form";

export const metadata: Metadata = { title: "Create an account" };

export default function SignUpPage() {
  return (
    <>
      <h1 className="text-2xl font-semibold">Create an account</h1>
      <p className="text-sm text-ink-soft">You get a lab of your own, with you as its owner. Others can add you to theirs.</p>
      <SignUpForm />
      <p className="text-sm text-ink-soft">Have an account? <Link href="/signin">Sign in</Link>.</p>
    </>
  );
}
