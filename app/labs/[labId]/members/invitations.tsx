"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";

export interface PendingInvitation { id: string; email: string; role: string; state: string; invitedBy: string | null; expiresAt: string }

const ROLES = ["reviewer", "modeler", "owner"] as const;

/** Owners invite by e-mail and see, and withdraw, the invitations not yet accepted. */
export function Invitations({ labId, pending }: { labId: string; pending: PendingInvitation[] }) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  const [notice, setNotice] = useState<{ text: string; link?: string } | null>(null);
  const [busy, setBusy] = useState(false);

  async function invite(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const el = e.currentTarget;
    const f = new FormData(el);
    setBusy(true);
    setError(null);
    setNotice(null);
    const res = await fetch(`/api/labs/${labId}/invitations`, {
      method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ email: f.get("email"), role: f.get("role") }),
    });
    const data = (await res.json().catch(() => null)) as { error?: string; email?: string; mail?: string; mail_error?: string; accept_url?: string } | null;
    setBusy(false);
    if (!res.ok) return setError(data?.error ?? `request failed (${res.status})`);
    if (data?.mail === "sent") setNotice({ text: `Invitation e-mailed to ${data.email}.` });
    else setNotice({ text: `No e-mail could be sent (${data?.mail === "disabled" ? "no SMTP server is configured" : data?.mail_error ?? "mail error"}). Pass this one-time link to ${data?.email} yourself:`, link: data?.accept_url });
    el.reset();
    router.refresh();
  }

  async function revoke(p: PendingInvitation) {
    if (!confirm(`Withdraw the invitation of ${p.email}? The link stops working.`)) return;
    const res = await fetch(`/api/labs/${labId}/invitations/${p.id}`, { method: "DELETE" });
    if (!res.ok) return setError(((await res.json().catch(() => null)) as { error?: string } | null)?.error ?? `request failed (${res.status})`);
    setNotice({ text: `Invitation of ${p.email} withdrawn.` });
    router.refresh();
  }

  return (
    <div className="flex flex-col gap-3">
      <form onSubmit={invite} aria-label="Invite by e-mail" className="flex flex-wrap items-end gap-3">
        <label className="flex flex-col gap-1 text-sm">E-mail
          <input name="email" type="email" required className="w-72 rounded-md border border-ink/25 bg-white px-3 py-1.5" />
        </label>
        <label className="flex flex-col gap-1 text-sm">Role
          <select name="role" defaultValue="reviewer" className="rounded-md border border-ink/25 bg-white px-2 py-1.5">
            {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
          </select>
        </label>
        <button type="submit" disabled={busy} className="rounded-md bg-ochre px-3 py-1.5 font-medium text-white hover:bg-ochre-dark disabled:opacity-60">
          {busy ? "Sending…" : "Send invitation"}
        </button>
      </form>
      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{error}</p>}
      {notice && (
        <p role="status" className="rounded-md bg-moss-light px-3 py-2 text-sm text-ink">
          {notice.text}{notice.link && <> <code className="break-all">{notice.link}</code></>}
        </p>
      )}
      {pending.length === 0 ? (
        <p className="text-sm text-ink-soft">No invitations waiting.</p>
      ) : (
        <table className="w-full overflow-hidden rounded-lg border border-ink/10 bg-white text-sm">
          <caption className="sr-only">Pending invitations</caption>
          <thead className="bg-paper text-left text-ink-soft">
            <tr><th className="px-3 py-2">E-mail</th><th className="px-3 py-2">Role</th><th className="px-3 py-2">Invited by</th><th className="px-3 py-2">Expires</th><th className="px-3 py-2"><span className="sr-only">Actions</span></th></tr>
          </thead>
          <tbody>
            {pending.map((p) => (
              <tr key={p.id} className="border-t border-ink/10">
                <td className="px-3 py-2">{p.email}</td>
                <td className="px-3 py-2">{p.role}</td>
                <td className="px-3 py-2 text-ink-soft">{p.invitedBy ?? "—"}</td>
                <td className="px-3 py-2">{p.state === "expired" ? <span className="text-red-700">expired {p.expiresAt.slice(0, 10)}</span> : `${p.expiresAt.slice(0, 16).replace("T", " ")} UTC`}</td>
                <td className="px-3 py-2 text-right">
                  <button type="button" className="text-red-700 hover:underline" onClick={() => void revoke(p)} aria-label={`Withdraw the invitation of ${p.email}`}>Withdraw</button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
