import type { Metadata } from "next";

import { EmptyState } from "@/app/_components/empty-state";

export const metadata: Metadata = { title: "Comparisons" };

export default function ComparisonsPage() {
  return (
    <div className="flex flex-col gap-4">
      <h1 className="text-2xl font-semibold">Comparisons</h1>
      <EmptyState title="No comparisons yet">
        <p>A comparison runs two or more designs, or a sweep of one or two parameters, with the same settings, and sets their CV, Fano factor and period precision side by side with confidence intervals.</p>
      </EmptyState>
    </div>
  );
}
