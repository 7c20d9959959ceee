import type { Metadata } from "next";

import { may } from "@/lib/access";
import { getVersion } from "@/lib/data/circuits";
import type { RunJson } from "@/lib/view/run-view";
import { runToJson } from "@/lib/runs";

import { loadRun } from "../_lib/load-run";
import { RunView } from "./run-view";

export async function generateMetadata({ params }: { params: Promise<{ runId: string }> }): Promise<Metadata> {
  return { title: `Run #${(await params).runId}` };
}

export default async function RunPage({ params }: { params: Promise<{ labId: string; runId: string }> }) {
  const { labId, runId } = await params;
  const { lab, run } = await loadRun(labId, runId);
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
