/**
 * What a run page needs on the server: the signed-in user's lab and the run (404 when it is
 * missing or belongs to another lab). Cached per request, so the layout and the page share one
 * lookup.
 */
import { notFound } from "next/navigation";
import { cache } from "react";

import { requirePageLab } from "@/lib/auth/page";
import { getRun } from "@/lib/data/runs";

const ID = /^[1-9]\d{0,15}$/;

export const loadRun = cache(async (labId: string, runId: string) => {
  const { lab } = await requirePageLab(labId, `/labs/${labId}/runs/${runId}`);
  if (!ID.test(runId)) notFound();
  const run = await getRun(runId);
  if (!run || run.labId !== labId) notFound();
  return { lab, run };
});
