"use client";

import { useState } from "react";
import useSWR from "swr";

interface Token { id: string; name: string; prefix: string; created_at: string; last_used_at: string | null; revoked_at: string | null }
const fetcher = (u: string) => fetch(u).then((r) => r.json() as Promise<{ tokens: Token[] }>);

export function TokenManager() {
  const { data, mutate, isLoading } = useSWR("/api/tokens", fetcher);
  const [fresh, setFresh] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);

  async function create(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const name = new FormData(form).get("name");
    const res = await fetch("/api/tokens", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ name }) });
    const body = (await res.json()) as { token?: string; error?: string };
    if (!res.ok) return setError(body.error ?? "could not create the token");
    setError(null);
    setFresh(body.token ?? null);
    form.reset();
    await mutate();
  }

  async function revoke(id: string) {
    await fetch(`/api/tokens/${id}`, { method: "DELETE" });
    await mutate();
  }

  return (
    <div className="flex flex-col gap-3">
      <form onSubmit={create} className="flex flex-wrap items-end gap-2">
        <label className="flex flex-col gap-1 text-sm">Token name
          <input name="name" required maxLength={80} placeholder="e.g. nightly sweep" className="rounded-md border border-ink/25 bg-white px-3 py-1.5" />
        </label>
        <button type="submit" className="rounded-md bg-ochre px-3 py-1.5 font-medium text-white hover:bg-ochre-dark">Create token</button>
      </form>
      {error && <p role="alert" className="text-sm text-red-700">{error}</p>}
      {fresh && (
        <p className="rounded-md border border-moss/40 bg-moss-light px-3 py-2 text-sm">
          Copy it now; it will not be shown again: <code data-testid="new-token" className="break-all font-mono">{fresh}</code>
        </p>
      )}
      {isLoading ? <p className="text-sm text-ink-soft">Loading tokens…</p> : (
        <ul className="divide-y divide-ink/10 rounded-lg border border-ink/10 bg-white text-sm">
          {(data?.tokens ?? []).length === 0 && <li className="px-3 py-2 text-ink-soft">No tokens yet.</li>}
          {(data?.tokens ?? []).map((t) => (
            <li key={t.id} className="flex items-center justify-between px-3 py-2">
              <span><strong>{t.name}</strong> <code className="text-ink-soft">{t.prefix}…</code>{" "}
                <span className="text-ink-soft">{t.revoked_at ? "revoked" : t.last_used_at ? `last used ${new Date(t.last_used_at).toLocaleString()}` : "never used"}</span></span>
              {!t.revoked_at && <button type="button" onClick={() => revoke(t.id)} className="text-red-700 hover:underline">Revoke</button>}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
