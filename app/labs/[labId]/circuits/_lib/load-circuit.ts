/**
 * What every page of one circuit needs on the server: the signed-in user's role in the lab, the
 * circuit (404 when it is missing or belongs to another lab) and its versions, newest first.
 * Cached per request, so the layout and the page share one lookup.
 */
import { notFound } from "next/navigation";
import { cache } from "react";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { getCircuit, listVersions, type VersionInfo } from "@/lib/data/circuits";

const ID = /^[1-9][0-9]{0,15}$/;

export const loadCircuit = cache(async (labId: string, circuitId: string) => {
  const { lab } = await requirePageLab(labId, `/labs/${labId}/circuits/${circuitId}`);
  if (!ID.test(circuitId)) notFound();
  const circuit = await getCircuit(circuitId);
  if (!circuit || circuit.labId !== labId) notFound();
  const versions = await listVersions(circuit.id);
  if (versions.length === 0) notFound();
  return {
    role: lab.role,
    canWrite: may(lab.role, "circuit:write"),
    canLaunch: may(lab.role, "run:launch"),
    circuit,
    versions,
  };
});

/** The version asked for in `?version=`, when it is one of this circuit's; else the newest. */
export function pickVersion(versions: VersionInfo[], requested: string | string[] | undefined): VersionInfo {
  const id = Array.isArray(requested) ? requested[0] : requested;
  return versions.find((v) => v.id === id) ?? versions[0];
}
