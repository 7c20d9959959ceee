import type { Metadata } from "next";

import { EmptyState } from "@/app/_components/empty-state";

export const metadata: Metadata = { title: "Runs" };

export default function RunsPage() {
  return (
    <div className="flex flex-col gap-4">
      <h1 className="text-2xl font-semibold">Runs</h1>
      <EmptyState title="No runs yet">
        <p>A run is either a trace (the deterministic mean-field path) or an ensemble (a seeded Gillespie simulation of many cells). Finished ensembles show their bands against the trace, the noise table and the period spread.</p>
      </EmptyState>
    </div>
  );
}
