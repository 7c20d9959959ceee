import type { Metadata } from "next";
import { notFound } from "next/navigation";

import { getVersion } from "@/lib/data/circuits";
import { omegaFor } from "@/ssa/model";

import { fileSlug } from "../../_components/format";
import { StabilityPanel } from "../../_components/stability-panel";
import { loadCircuit, pickVersion } from "../../_lib/load-circuit";

export const metadata: Metadata = { title: "Stability" };

export default async function StabilityPage({ params, searchParams }: {
  params: Promise<{ labId: string; circuitId: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const [{ labId, circuitId }, query] = await Promise.all([params, searchParams]);
  const { circuit, versions } = await loadCircuit(labId, circuitId);
  const selected = pickVersion(versions, query.version);
  const version = await getVersion(selected.id);
  if (!version || version.circuitId !== circuit.id) notFound();
  const { units, volume_fL: volumeFL } = version.circuit;
  return (
    <div className="flex flex-col gap-3">
      <p className="text-sm text-ink-soft">
        Version {selected.number}: the deterministic steady state, the Jacobian&apos;s eigenvalues there, and the noise the linear noise approximation predicts around it.
      </p>
      <StabilityPanel versionId={selected.id} fileBase={`${fileSlug(circuit.name)}-v${selected.number}`} timeUnit={units.time} amountUnit={units.amount} omega={omegaFor(units.amount, volumeFL)} />
    </div>
  );
}
