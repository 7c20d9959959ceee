import type { Metadata } from "next";
import Link from "next/link";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { listCircuits } from "@/lib/data/circuits";

import { ComparisonForm } from "./comparison-form";

export const metadata: Metadata = { title: "New comparison" };

export default async function NewComparisonPage({ params }: { params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/comparisons/new`);
  const heading = (
    <div>
      <p className="text-sm"><Link href={`/labs/${labId}/comparisons`}>← Comparisons</Link></p>
      <h1 className="mt-1 text-2xl font-semibold">New comparison</h1>
    </div>
  );
  if (!may(lab.role, "comparison:write")) {
    return (
      <div className="flex flex-col gap-4">
        {heading}
        <p role="note" data-testid="read-only-notice" className="rounded-md border border-ink/15 bg-white px-4 py-3 text-sm text-ink-soft">
          You are a <strong className="text-ink">{lab.role}</strong> in {lab.name}: you can open every comparison and download its tables and charts, but setting one up is for owners and modelers.
        </p>
      </div>
    );
  }
  const circuits = await listCircuits(labId);
  return (
    <div className="flex flex-col gap-4">
      {heading}
      <p className="max-w-3xl text-sm text-ink-soft">
        List the designs (a saved circuit version, optionally with parameters changed), or sweep one parameter, or a grid of two.
        Every design runs one ensemble with the same settings; the noise table sets their CV, Fano factor and period precision side by side
        with 95% bootstrap intervals over cells.
      </p>
      {circuits.length === 0 ? (
        <p className="rounded-md border border-ink/15 bg-white px-4 py-3 text-sm">This lab has no circuits yet. <Link href={`/labs/${labId}/circuits`}>Write or import one</Link> first.</p>
      ) : (
        <ComparisonForm labId={labId} circuits={circuits.map((c) => ({ id: c.id, name: c.name, versionId: c.latestVersionId, versions: Number(c.versionCount) }))} />
      )}
    </div>
  );
}
