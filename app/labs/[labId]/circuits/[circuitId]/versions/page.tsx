import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";

import { TableHead } from "@/app/_components/table-head";
import { diffCircuits } from "@/lib/view/circuit-diff";
import { getVersion } from "@/lib/data/circuits";

import { formatWhen } from "../../_components/format";
import { VersionDiff } from "../../_components/version-diff";
import { loadCircuit } from "../../_lib/load-circuit";

export const metadata: Metadata = { title: "Versions" };

const first = (v: string | string[] | undefined) => (Array.isArray(v) ? v[0] : v);

export default async function VersionsPage({ params, searchParams }: {
  params: Promise<{ labId: string; circuitId: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const [{ labId, circuitId }, query] = await Promise.all([params, searchParams]);
  const { circuit, versions } = await loadCircuit(labId, circuitId);
  const base = `/labs/${labId}/circuits/${circuitId}`;
  const byId = (id: string | undefined) => versions.find((v) => v.id === id);
  const to = byId(first(query.to)) ?? versions[0];
  const from = byId(first(query.from)) ?? versions.find((v) => v.number < to.number) ?? versions[versions.length - 1];
  let diff = null;
  if (versions.length > 1) {
    const [a, b] = await Promise.all([getVersion(from.id), getVersion(to.id)]);
    if (!a || !b || a.circuitId !== circuit.id || b.circuitId !== circuit.id) notFound();
    diff = diffCircuits(a.circuit, b.circuit);
  }
  return (
    <div className="flex flex-col gap-6">
      <section aria-labelledby="history-h" className="flex flex-col gap-2">
        <h2 id="history-h" className="font-semibold">History</h2>
        <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
          <table className="w-full min-w-[640px] text-sm">
            <caption className="sr-only">Versions of this circuit, newest first</caption>
            <TableHead columns={["Version", "Saved", "By", "Message", "Source", "Content hash"]} />
            <tbody>
              {versions.map((v, i) => (
                <tr key={v.id} className="border-t border-ink/10" data-testid="version-row">
                  <td className="px-3 py-2 font-medium">
                    <Link href={`${base}${i === 0 ? "" : `?version=${v.id}`}`}>v{v.number}</Link>
                    {i === 0 && <span className="ml-1 text-xs text-ink-soft">latest</span>}
                  </td>
                  <td className="whitespace-nowrap px-3 py-2 text-ink-soft">{formatWhen(v.createdAt)}</td>
                  <td className="px-3 py-2 text-ink-soft">{v.createdByEmail ?? "—"}</td>
                  <td className="px-3 py-2">{v.message ?? <span className="text-ink-soft">—</span>}</td>
                  <td className="px-3 py-2 text-ink-soft">{v.sourceFormat === "sbml" ? "SBML import" : "circuit file"}{v.importWarnings.length ? ` (${v.importWarnings.length} warning${v.importWarnings.length === 1 ? "" : "s"}: ${v.importWarnings.map((w) => w.code).join(", ")})` : ""}</td>
                  <td className="px-3 py-2 font-mono text-xs text-ink-soft" title={v.contentHash}>{v.contentHash.slice(0, 12)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      <section aria-labelledby="diff-h" className="flex flex-col gap-3 rounded-lg border border-ink/10 bg-white p-4">
        <h2 id="diff-h" className="font-semibold">Compare two versions</h2>
        {versions.length < 2 ? (
          <p className="text-sm text-ink-soft">Only one version so far. Save an edit and the two can be compared here.</p>
        ) : (
          <>
            <form method="get" className="flex flex-wrap items-end gap-3 text-sm">
              <label className="flex flex-col gap-1">
                <span className="font-medium">From</span>
                <select name="from" defaultValue={from.id} className="rounded-md border border-ink/25 bg-white px-2 py-1">
                  {versions.map((v) => <option key={v.id} value={v.id}>v{v.number}{v.message ? ` · ${v.message}` : ""}</option>)}
                </select>
              </label>
              <label className="flex flex-col gap-1">
                <span className="font-medium">To</span>
                <select name="to" defaultValue={to.id} className="rounded-md border border-ink/25 bg-white px-2 py-1">
                  {versions.map((v) => <option key={v.id} value={v.id}>v{v.number}{v.message ? ` · ${v.message}` : ""}</option>)}
                </select>
              </label>
              <button type="submit" className="rounded-md border border-ink/25 px-3 py-1 hover:bg-paper">Compare</button>
            </form>
            <h3 className="text-sm text-ink-soft" data-testid="diff-title">Changes from v{from.number} to v{to.number}</h3>
            {diff && <VersionDiff diff={diff} from={from.number} to={to.number} />}
          </>
        )}
      </section>
    </div>
  );
}
