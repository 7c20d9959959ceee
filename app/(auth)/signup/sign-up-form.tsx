"use client";

import { signIn } from "next-auth/react";
import { useRouter } from "next/navigation";
import { useState } from "react";

import { Field } from "@/app/_components/field";
import { describeIssue } from "@/lib/schemas/common";
import { SignUpInput } from "@/lib/schemas/auth";

type Errors = Partial<Record<"email" | "name" | "password" | "labName" | "form", string>>;

export function SignUpForm() {
  const router = useRouter();
  const [errors, setErrors] = useState<Errors>({});
  const [busy, setBusy] = useState(false);

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    const raw = { email: form.get("email"), name: form.get("name"), password: form.get("password"), labName: form.get("labName") || undefined };
    const parsed = SignUpInput.safeParse(raw);
    if (!parsed.success) {
      const next: Errors = {};
      for (const issue of parsed.error.issues) next[String(issue.path[0]) as keyof Errors] ??= describeIssue(issue);
      return setErrors(next);
    }
    setBusy(true);
    const res = await fetch("/api/signup", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(parsed.data) });
    if (!res.ok) {
      setBusy(false);
      const { error } = (await res.json().catch(() => ({ error: "form: sign-up failed" }))) as { error: string };
      const field = error.split(":")[0] as keyof Errors;
      return setErrors({ [["email", "name", "password", "labName"].includes(field) ? field : "form"]: error });
    }
    const { message } = (await res.json().catch(() => ({}))) as { message?: string };
    const signedIn = await signIn("credentials", { email: parsed.data.email, password: parsed.data.password, redirect: false });
    if (!signedIn?.ok) {
      // The address may have had an account already; the answer does not say, so neither do we.
      setBusy(false);
      return setErrors({ form: message ?? "Sign in with this e-mail and password." });
    }
    router.push("/labs");
    router.refresh();
  }

  return (
    <form onSubmit={onSubmit} className="flex flex-col gap-4" noValidate>
      <Field label="Name" name="name" autoComplete="name" error={errors.name} required />
      <Field label="E-mail" name="email" type="email" autoComplete="email" error={errors.email} required />
      <Field label="Password (10 characters or more)" name="password" type="password" autoComplete="new-password" error={errors.password} required />
      <Field label="Lab name (optional)" name="labName" error={errors.labName} />
      {errors.form && <p role="alert" className="text-sm text-red-700">{errors.form}</p>}
      <button type="submit" disabled={busy} className="rounded-md bg-ochre px-4 py-2 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
        {busy ? "Creating…" : "Create account"}
      </button>
    </form>
  );
}
