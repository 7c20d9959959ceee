import Link from "next/link";
import { Suspense } from "react";

import { CircuitHeaderBar } from "../_components/circuit-header-bar";
import { loadCircuit } from "../_lib/load-circuit";

export default async function CircuitLayout({ children, params }: { children: React.ReactNode; params: Promise<{ labId: string; circuitId: string }> }) {
  const { labId, circuitId } = await params;
  const { circuit, versions, canLaunch } = await loadCircuit(labId, circuitId);
  const base = `/labs/${labId}/circuits/${circuitId}`;
  return (
    <div className="flex flex-col gap-4">
      <div>
        <nav aria-label="Breadcrumb" className="text-sm">
          <Link href={`/labs/${labId}/circuits`}>Circuits</Link> <span aria-hidden className="text-ink-soft">/</span>
        </nav>
        <h1 className="mt-1 break-words text-2xl font-semibold">{circuit.name}</h1>
      </div>
      <Suspense fallback={<div className="h-20 animate-pulse rounded-md bg-ink/5" />}>
        <CircuitHeaderBar
          labId={labId}
          circuitName={circuit.name}
          base={base}
          canLaunch={canLaunch}
          versions={versions.map((v) => ({ id: v.id, number: v.number, message: v.message, createdAt: new Date(v.createdAt).toISOString(), createdBy: v.createdByEmail }))}
        />
      </Suspense>
      {children}
    </div>
  );
}
