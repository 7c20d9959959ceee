import type { Metadata } from "next";
import { notFound } from "next/navigation";

import { may } from "@/lib/access";
import { requirePageUser } from "@/lib/auth/page";
import { getVersion } from "@/lib/data/circuits";
import { getRun } from "@/lib/data/runs";
import type { RunJson } from "@/lib/run-view";
import { runToJson } from "@/lib/runs";

import { RunView } from "./run-view";

export async function generateMetadata({ params }: { params: Promise<{ runId: string }> }): Promise<Metadata> {
  return { title: `Run #${(await params).runId}` };
}

export default async function RunPage({ params }: { params: Promise<{ labId: string; runId: string }> }) {
  const { labId, runId } = await params;
  const user = await requirePageUser(`/labs/${labId}/runs/${runId}`);
  const lab = user.labs.find((l) => l.id === labId)!;
  if (!/^[1-9]\d{0,15}$/.test(runId)) notFound();
  const run = await getRun(runId);
  if (!run || run.labId !== labId) notFound();
  const version = await getVersion(run.versionId);
  // Through JSON, so the first render sees exactly what the API's polling will return.
  const initialRun = JSON.parse(JSON.stringify(runToJson(run))) as RunJson;
  return (
    <RunView
      labId={labId} initialRun={initialRun} contentHash={version?.contentHash ?? null}
      canLaunch={may(lab.role, "run:launch")} canCancel={may(lab.role, "run:cancel")} role={lab.role}
      timeUnit={version?.circuit.units.time ?? "model time"} modelAmountUnit={version?.circuit.units.amount ?? "model units"}
    />
  );
}
