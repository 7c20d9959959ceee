"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";

export interface MemberControlsProps {
  labId: string; canManage: boolean; selfId: string;
  members: { userId: string; email: string; name: string; role: string }[];
}

const ROLES = ["owner", "modeler", "reviewer"] as const;

async function send(url: string, method: string, body?: unknown): Promise<string | null> {
  const res = await fetch(url, { method, headers: { "content-type": "application/json" }, body: body ? JSON.stringify(body) : undefined });
  if (res.ok) return null;
  const data = (await res.json().catch(() => null)) as { error?: string } | null;
  return data?.error ?? `request failed (${res.status})`;
}

/** The members table; owners also change roles, remove members and add people by e-mail. */
export function MemberControls({ labId, canManage, selfId, members }: MemberControlsProps) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  const act = async (p: Promise<string | null>) => {
    const err = await p;
    setError(err);
    if (!err) router.refresh();
  };
  return (
    <div className="flex flex-col gap-4">
      {error && <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">{error}</p>}
      <table className="w-full overflow-hidden rounded-lg border border-ink/10 bg-white text-sm">
        <caption className="sr-only">Lab members</caption>
        <thead className="bg-paper text-left text-ink-soft">
          <tr><th className="px-3 py-2">Name</th><th className="px-3 py-2">E-mail</th><th className="px-3 py-2">Role</th>{canManage && <th className="px-3 py-2"><span className="sr-only">Actions</span></th>}</tr>
        </thead>
        <tbody>
          {members.map((m) => (
            <tr key={m.userId} className="border-t border-ink/10">
              <td className="px-3 py-2">{m.name}{m.userId === selfId && <span className="text-ink-soft"> (you)</span>}</td>
              <td className="px-3 py-2">{m.email}</td>
              <td className="px-3 py-2">
                {canManage ? (
                  <select aria-label={`Role of ${m.email}`} value={m.role} className="rounded border border-ink/20 px-1 py-0.5"
                    onChange={(e) => act(send(`/api/labs/${labId}/members/${m.userId}`, "PATCH", { role: e.target.value }))}>
                    {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
                  </select>
                ) : m.role}
              </td>
              {canManage && (
                <td className="px-3 py-2 text-right">
                  <button type="button" className="text-red-700 hover:underline"
                    onClick={() => { if (confirm(`Remove ${m.email} from this lab?`)) void act(send(`/api/labs/${labId}/members/${m.userId}`, "DELETE")); }}>
                    Remove
                  </button>
                </td>
              )}
            </tr>
          ))}
        </tbody>
      </table>
      {canManage && (
        <details className="text-sm">
        <summary className="cursor-pointer text-ink-soft">Add someone who already has an account, without an invitation</summary>
        <form className="mt-2 flex flex-wrap items-end gap-3" onSubmit={(e) => {
          e.preventDefault();
          const f = new FormData(e.currentTarget);
          void act(send(`/api/labs/${labId}/members`, "POST", { email: f.get("email"), role: f.get("role") }));
        }}>
          <label className="flex flex-col gap-1 text-sm">E-mail of an existing account
            <input name="email" type="email" required className="rounded-md border border-ink/25 bg-white px-3 py-1.5" />
          </label>
          <label className="flex flex-col gap-1 text-sm">Role
            <select name="role" defaultValue="modeler" className="rounded-md border border-ink/25 bg-white px-2 py-1.5">
              {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
            </select>
          </label>
          <button type="submit" className="rounded-md bg-ochre px-3 py-1.5 font-medium text-white hover:bg-ochre-dark">Add member</button>
        </form>
        </details>
      )}
    </div>
  );
}
