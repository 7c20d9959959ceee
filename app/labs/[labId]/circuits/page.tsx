import type { Metadata } from "next";

import { EmptyState } from "@/app/_components/empty-state";

export const metadata: Metadata = { title: "Circuits" };

export default function CircuitsPage() {
  return (
    <div className="flex flex-col gap-4">
      <h1 className="text-2xl font-semibold">Circuits</h1>
      <EmptyState title="No circuits in this lab yet">
        <p>A circuit lists species, parameters and reactions (mass action, Hill activation or repression, or a formula) in nM, µM or molecules, with a cell volume. Every save becomes an immutable version that runs point back to. Scripts can already add one with POST /api/circuits and a personal API token.</p>
      </EmptyState>
    </div>
  );
}
