"use client";

import { signIn, signOut } from "next-auth/react";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useState } from "react";

import { Field } from "@/app/_components/field";
import { describeIssue } from "@/lib/schemas/common";
import { InviteeAccount } from "@/lib/schemas/invitations";

export interface AcceptInvitationProps { token: string; labId: string; email: string; hasAccount: boolean; signedInAs: string | null }

async function accept(token: string, body: unknown): Promise<{ ok: boolean; error?: string }> {
  const res = await fetch(`/api/invitations/${token}/accept`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
  if (res.ok) return { ok: true };
  const data = (await res.json().catch(() => null)) as { error?: string } | null;
  return { ok: false, error: data?.error ?? `request failed (${res.status})` };
}

/**
 * The three ways in: signed in with the invited address (one button), signed in as someone
 * else (sign out first), or not signed in (sign in, or create the account here).
 */
export function AcceptInvitation({ token, labId, email, hasAccount, signedInAs }: AcceptInvitationProps) {
  const router = useRouter();
  const [errors, setErrors] = useState<Partial<Record<"name" | "password" | "form", string>>>({});
  const [busy, setBusy] = useState(false);
  const here = `/invite/${token}`;

  if (signedInAs && signedInAs.toLowerCase() === email.toLowerCase()) {
    return (
      <div className="flex flex-col gap-3">
        {errors.form && <p role="alert" className="text-sm text-red-700">{errors.form}</p>}
        <button type="button" disabled={busy} className="rounded-md bg-ochre px-4 py-2 font-medium text-white hover:bg-ochre-dark disabled:opacity-60"
          onClick={async () => {
            setBusy(true);
            const r = await accept(token, {});
            if (!r.ok) { setBusy(false); return setErrors({ form: r.error }); }
            router.push(`/labs/${labId}`);
            router.refresh();
          }}>
          {busy ? "Joining…" : "Accept and join the lab"}
        </button>
      </div>
    );
  }
  if (signedInAs) {
    return (
      <div className="flex flex-col gap-3 text-sm">
        <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-red-800">You are signed in as {signedInAs}, but this invitation is for {email}.</p>
        <button type="button" className="self-start rounded-md border border-ink/20 bg-white px-3 py-1.5" onClick={() => void signOut({ callbackUrl: here })}>
          Sign out, then continue as {email}
        </button>
      </div>
    );
  }
  if (hasAccount) {
    return (
      <p className="text-sm">
        {email} already has a Burstwise account. <Link href={`/signin?callbackUrl=${encodeURIComponent(here)}`}>Sign in</Link> with it, and you come back here to accept.
      </p>
    );
  }

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const parsed = InviteeAccount.safeParse({ name: form.get("name"), password: form.get("password") });
    if (!parsed.success) {
      const next: typeof errors = {};
      for (const issue of parsed.error.issues) next[String(issue.path[0]) as "name" | "password"] ??= describeIssue(issue);
      return setErrors(next);
    }
    setBusy(true);
    setErrors({});
    const r = await accept(token, parsed.data);
    if (!r.ok) {
      setBusy(false);
      const field = r.error?.split(":")[0];
      return setErrors(field === "name" || field === "password" ? { [field]: r.error } : { form: r.error });
    }
    await signIn("credentials", { email, password: parsed.data.password, redirect: false });
    router.push(`/labs/${labId}`);
    router.refresh();
  }

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-label="Create your account">
      <p className="text-sm text-ink-soft">Create your Burstwise account for <strong className="text-ink">{email}</strong> to accept.</p>
      <Field label="Name" name="name" autoComplete="name" error={errors.name} required />
      <Field label="Password (10 characters or more)" name="password" type="password" autoComplete="new-password" error={errors.password} required />
      {errors.form && <p role="alert" className="text-sm text-red-700">{errors.form}</p>}
      <button type="submit" disabled={busy} className="rounded-md bg-ochre px-4 py-2 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
        {busy ? "Creating…" : "Create account and join"}
      </button>
      <p className="text-sm text-ink-soft">Have an account with another address? Ask the owner to invite that one instead.</p>
    </form>
  );
}
