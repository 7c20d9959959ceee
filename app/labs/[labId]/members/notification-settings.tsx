"use client";

import { useState } from "react";

const CHOICES = [
  { value: "off", label: "No e-mail" },
  { value: "mine", label: "When a run I launched finishes or fails" },
  { value: "lab", label: "When any run in this lab finishes or fails" },
] as const;

/** Each member's own run e-mail choice for this lab (saved at once). */
export function NotificationSettings({ labId, initial }: { labId: string; initial: string }) {
  const [value, setValue] = useState(initial);
  const [state, setState] = useState<{ ok: boolean; text: string } | null>(null);
  async function choose(runs: string) {
    const before = value;
    setValue(runs);
    setState(null);
    const res = await fetch("/api/me/notifications", { method: "PUT", headers: { "content-type": "application/json" }, body: JSON.stringify({ lab_id: labId, runs }) });
    if (res.ok) return setState({ ok: true, text: "Saved." });
    setValue(before);
    setState({ ok: false, text: ((await res.json().catch(() => null)) as { error?: string } | null)?.error ?? `could not save (${res.status})` });
  }
  return (
    <fieldset className="flex flex-col gap-2 text-sm">
      <legend className="sr-only">Run e-mails</legend>
      {CHOICES.map((c) => (
        <label key={c.value} className="flex items-center gap-2">
          <input type="radio" name="runs" value={c.value} checked={value === c.value} onChange={() => void choose(c.value)} /> {c.label}
        </label>
      ))}
      {state && <p role={state.ok ? "status" : "alert"} className={state.ok ? "text-moss" : "text-red-700"}>{state.text}</p>}
    </fieldset>
  );
}
