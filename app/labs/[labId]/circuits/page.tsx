import type { Metadata } from "next";
import { Suspense } from "react";

import { EmptyState } from "@/app/_components/empty-state";
import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { listCircuits } from "@/lib/data/circuits";

import { CircuitTable } from "./_components/circuit-table";
import { CreateCircuit } from "./_components/create-circuit";

export const metadata: Metadata = { title: "Circuits" };

export default async function CircuitsPage({ params }: { params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/circuits`);
  const canWrite = may(lab.role, "circuit:write");
  return (
    <div className="flex flex-col gap-4">
      <div>
        <h1 className="text-2xl font-semibold">Circuits</h1>
        <p className="mt-1 text-sm text-ink-soft">
          Species, parameters and reactions in bench units. Every save is an immutable version; runs point at the version they ran.
        </p>
      </div>
      {/* A skeleton here rather than a segment loading.tsx, which would also wrap each circuit's
          pages and turn their 404 (a circuit of another lab) into a streamed 200. */}
      <Suspense fallback={<ListSkeleton />}>
        <CircuitList labId={labId} canWrite={canWrite} />
      </Suspense>
    </div>
  );
}

async function CircuitList({ labId, canWrite }: { labId: string; canWrite: boolean }) {
  const circuits = await listCircuits(labId);
  const rows = circuits.map((c) => ({
    id: c.id, name: c.name, versions: c.versionCount, updatedAt: new Date(c.updatedAt).toISOString(),
    changedBy: c.changedBy, lastRunAt: c.lastRunAt ? new Date(c.lastRunAt).toISOString() : null,
  }));
  return (
    <>
      {canWrite && <CreateCircuit labId={labId} existingNames={rows.map((r) => r.name)} />}
      {rows.length === 0 ? (
        <EmptyState title="No circuits in this lab yet">
          <p>
            A circuit lists species, parameters and reactions (mass action, Hill activation or repression, or a formula) in nM, µM or
            molecules, with a cell volume.{" "}
            {canWrite ? "Start from a template with “New circuit” above, or upload a circuit file or SBML." : "Modelers and owners of the lab add them; you will see them here."}
          </p>
        </EmptyState>
      ) : (
        <CircuitTable labId={labId} rows={rows} />
      )}
    </>
  );
}

function ListSkeleton() {
  return (
    <div className="flex flex-col gap-4" aria-busy="true" aria-label="Loading circuits">
      <div className="h-9 w-32 animate-pulse rounded-md bg-ink/5" />
      <div className="flex flex-col gap-2 rounded-lg border border-ink/10 bg-white p-3">
        {[0, 1, 2, 3].map((i) => <div key={i} className="h-6 animate-pulse rounded bg-ink/5" />)}
      </div>
    </div>
  );
}
