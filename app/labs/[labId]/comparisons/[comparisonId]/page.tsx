import type { Metadata } from "next";
import { notFound } from "next/navigation";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import type { ComparisonJson } from "@/lib/view/comparison-view";
import { loadComparisonJson } from "@/lib/comparisons";
import { getComparison } from "@/lib/data/comparisons";

import { ComparisonView } from "./comparison-view";

export async function generateMetadata({ params }: { params: Promise<{ comparisonId: string }> }): Promise<Metadata> {
  return { title: `Comparison #${(await params).comparisonId}` };
}

export default async function ComparisonPage({ params }: { params: Promise<{ labId: string; comparisonId: string }> }) {
  const { labId, comparisonId } = await params;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/comparisons/${comparisonId}`);
  if (!/^[1-9]\d{0,15}$/.test(comparisonId)) notFound();
  const c = await getComparison(comparisonId);
  if (!c || c.labId !== labId) notFound();
  // Through JSON, so the first render sees exactly what the API's polling returns.
  const initial = JSON.parse(JSON.stringify(await loadComparisonJson(c))) as ComparisonJson;
  return (
    <ComparisonView
      labId={labId} initial={initial}
      canLaunch={may(lab.role, "run:launch")} canCancel={may(lab.role, "run:cancel")} canDelete={may(lab.role, "delete")} role={lab.role}
    />
  );
}
