import type { Metadata } from "next";

import { CountsView } from "../../_components/counts-view";
import { loadCircuit, pickVersion } from "../../_lib/load-circuit";

export const metadata: Metadata = { title: "Counts view" };

export default async function CountsPage({ params, searchParams }: {
  params: Promise<{ labId: string; circuitId: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const [{ labId, circuitId }, query] = await Promise.all([params, searchParams]);
  const { versions } = await loadCircuit(labId, circuitId);
  const selected = pickVersion(versions, query.version);
  return (
    <div className="flex flex-col gap-3">
      <p className="text-sm text-ink-soft">
        Version {selected.number} in molecule counts: what the stochastic engine simulates when this circuit runs as an ensemble.
      </p>
      <CountsView versionId={selected.id} />
    </div>
  );
}
