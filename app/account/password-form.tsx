"use client";

import { useState } from "react";

import { Field } from "@/app/_components/field";
import { PasswordChangeInput } from "@/lib/schemas/auth";
import { describeIssue } from "@/lib/schemas/common";

type Errors = Partial<Record<"current_password" | "new_password" | "repeat_password" | "form", string>>;

export function PasswordForm() {
  const [errors, setErrors] = useState<Errors>({});
  const [done, setDone] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const formEl = e.currentTarget;
    const form = new FormData(formEl);
    setDone(null);
    const parsed = PasswordChangeInput.safeParse({ current_password: form.get("current_password"), new_password: form.get("new_password") });
    if (!parsed.success) {
      const next: Errors = {};
      for (const issue of parsed.error.issues) next[String(issue.path[0]) as keyof Errors] ??= describeIssue(issue);
      return setErrors(next);
    }
    if (form.get("repeat_password") !== parsed.data.new_password) return setErrors({ repeat_password: "repeat_password: is not the same as the new password" });
    setBusy(true);
    const res = await fetch("/api/account/password", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(parsed.data) });
    setBusy(false);
    const body = (await res.json().catch(() => ({ error: "form: the password could not be changed" }))) as { error?: string; signed_in?: boolean };
    if (!res.ok) {
      const error = body.error ?? "form: the password could not be changed";
      const field = error.split(":")[0] as keyof Errors;
      return setErrors({ [["current_password", "new_password"].includes(field) ? field : "form"]: error });
    }
    setErrors({});
    formEl.reset();
    setDone(body.signed_in
      ? "Password changed. Every other browser signed in to your account was signed out; this one stays signed in."
      : "Password changed. Every session was signed out: sign in again with the new password.");
  }

  return (
    <form onSubmit={onSubmit} className="flex max-w-md flex-col gap-4" noValidate>
      <Field label="Current password" name="current_password" type="password" autoComplete="current-password" error={errors.current_password} required />
      <Field label="New password (10 characters or more)" name="new_password" type="password" autoComplete="new-password" error={errors.new_password} required />
      <Field label="New password again" name="repeat_password" type="password" autoComplete="new-password" error={errors.repeat_password} required />
      {errors.form && <p role="alert" className="text-sm text-red-700">{errors.form}</p>}
      {done && <p role="status" className="rounded-md border border-moss/40 bg-moss-light px-3 py-2 text-sm">{done}</p>}
      <button type="submit" disabled={busy} className="self-start rounded-md bg-ochre px-4 py-2 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
        {busy ? "Changing…" : "Change password"}
      </button>
    </form>
  );
}
