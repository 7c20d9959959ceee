"use client";

import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";

import { Field } from "@/app/_components/field";
import { toSafeRedirect } from "@/lib/view/safe-redirect";

export function SignInForm({ callbackUrl, initialError }: { callbackUrl: string; initialError?: string }) {
  const router = useRouter();
  const [error, setError] = useState(initialError);
  const [busy, setBusy] = useState(false);

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    setBusy(true);
    const form = new FormData(e.currentTarget);
    const res = await signIn("credentials", { email: form.get("email"), password: form.get("password"), redirect: false });
    setBusy(false);
    // 429: the attempt limits; the message says how long to wait.
    if (res?.status === 429) return setError(`Too many attempts, try again in ${/try again in (.+)$/.exec(res.error ?? "")?.[1] ?? "a while"}.`);
    if (!res || res.error) return setError("E-mail or password is wrong.");
    router.push(toSafeRedirect(callbackUrl, "/labs"));
    router.refresh();
  }

  return (
    <form onSubmit={onSubmit} className="flex flex-col gap-4" noValidate>
      <Field label="E-mail" name="email" type="email" autoComplete="email" required />
      <Field label="Password" name="password" type="password" autoComplete="current-password" required />
      {error && <p role="alert" className="text-sm text-red-700">{error}</p>}
      <button type="submit" disabled={busy} className="rounded-md bg-ochre px-4 py-2 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
        {busy ? "Signing in…" : "Sign in"}
      </button>
    </form>
  );
}
