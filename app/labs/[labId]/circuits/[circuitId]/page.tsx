import type { Metadata } from "next";
import { notFound } from "next/navigation";

import { WarningList } from "@/app/_components/warning-list";
import { getVersion } from "@/lib/data/circuits";

import { CircuitEditor } from "../_components/circuit-editor";
import { loadCircuit, pickVersion } from "../_lib/load-circuit";

export const metadata: Metadata = { title: "Circuit" };

export default async function CircuitPage({ params, searchParams }: {
  params: Promise<{ labId: string; circuitId: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const [{ labId, circuitId }, query] = await Promise.all([params, searchParams]);
  const { circuit, versions, canWrite } = await loadCircuit(labId, circuitId);
  const selected = pickVersion(versions, query.version);
  const version = await getVersion(selected.id);
  if (!version || version.circuitId !== circuit.id) notFound();
  return (
    <>
      <WarningList warnings={version.importWarnings} title={`Warnings from the SBML import of version ${version.number}`} testId="import-warnings" />
      <CircuitEditor
        key={version.id}
        labId={labId}
        circuitId={circuit.id}
        versionId={version.id}
        versionNumber={version.number}
        latestNumber={versions[0].number}
        circuit={version.circuit}
        canWrite={canWrite}
        justSaved={query.saved === "1" && canWrite}
      />
    </>
  );
}
