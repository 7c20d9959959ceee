import type { Metadata } from "next";

import { EmptyState } from "@/app/_components/empty-state";

export const metadata: Metadata = { title: "Data" };

export default function DataPage() {
  return (
    <div className="flex flex-col gap-4">
      <h1 className="text-2xl font-semibold">Data</h1>
      <EmptyState title="No datasets yet">
        <p>Datasets are measured time series or single-cell snapshots (for example fluorescence with a molecules-per-unit factor) that you lay over a simulation to compare its spread with the bench.</p>
      </EmptyState>
    </div>
  );
}
