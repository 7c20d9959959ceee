import { randomInt } from "node:crypto";

import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { getCircuit, getVersion } from "@/lib/data/circuits";
import { getQueuedWork } from "@/lib/data/runs";
import { getRunBudget } from "@/lib/run-budget";

import { RunLauncher } from "./run-launcher";
import { VersionPicker } from "./version-picker";

export const metadata: Metadata = { title: "New run" };

export default async function NewRunPage({ params, searchParams }: {
  params: Promise<{ labId: string }>; searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const { labId } = await params;
  const sp = await searchParams;
  const { user, lab } = await requirePageLab(labId, `/labs/${labId}/runs/new`);
  const heading = (
    <div>
      <p className="text-sm"><Link href={`/labs/${labId}/runs`}>← Runs</Link></p>
      <h1 className="mt-1 text-2xl font-semibold">New run</h1>
    </div>
  );
  if (!may(lab.role, "run:launch")) {
    return (
      <div className="flex flex-col gap-4">
        {heading}
        <p role="note" data-testid="read-only-notice" className="rounded-md border border-ink/15 bg-white px-4 py-3 text-sm text-ink-soft">
          You are a <strong className="text-ink">{lab.role}</strong> in {lab.name}: you can open every run and download its results, but launching runs is for owners and modelers.
        </p>
      </div>
    );
  }
  const versionId = typeof sp.version === "string" && /^[1-9]\d{0,15}$/.test(sp.version) ? sp.version : null;
  if (!versionId) {
    return (
      <div className="flex flex-col gap-4">
        {heading}
        <p className="text-sm text-ink-soft">Choose the circuit and the saved version to run. Every run points at the version it ran, so its results stay reproducible after later edits.</p>
        <VersionPicker labId={labId} />
      </div>
    );
  }
  const version = await getVersion(versionId);
  if (!version || version.labId !== labId) notFound();
  const [circuit, queued] = await Promise.all([getCircuit(version.circuitId), getQueuedWork(labId, user.id)]);
  const budget = getRunBudget();
  return (
    <div className="flex flex-col gap-4">
      {heading}
      <RunLauncher
        labId={labId}
        version={{ id: version.id, number: version.number, circuitId: version.circuitId, circuitName: circuit?.name ?? version.circuit.name ?? "Circuit", contentHash: version.contentHash }}
        circuit={version.circuit}
        initialSeed={randomInt(1, 2 ** 31)}
        budget={{ lab: budget.lab, user: budget.user, labQueued: queued.labCost, userQueued: queued.userCost }}
      />
    </div>
  );
}
