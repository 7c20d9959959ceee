import type { Metadata } from "next";
import Link from "next/link";

import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";
import { RUN_STATUSES } from "@/lib/schemas/runs";

import { RunsTable } from "./runs-table";

export const metadata: Metadata = { title: "Runs" };

const one = (v: string | string[] | undefined) => (typeof v === "string" ? v : undefined);

export default async function RunsPage({ params, searchParams }: {
  params: Promise<{ labId: string }>; searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const { labId } = await params;
  const sp = await searchParams;
  const { lab } = await requirePageLab(labId, `/labs/${labId}/runs`);
  const canLaunch = may(lab.role, "run:launch");
  const status = (RUN_STATUSES as readonly string[]).includes(one(sp.status) ?? "") ? one(sp.status) : undefined;
  const circuit = /^[1-9]\d{0,15}$/.test(one(sp.circuit) ?? "") ? one(sp.circuit) : undefined;
  const page = Math.max(1, Math.min(100_000, Number.parseInt(one(sp.page) ?? "1", 10) || 1));
  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="text-2xl font-semibold">Runs</h1>
          <p className="mt-1 text-sm text-ink-soft">Traces (the deterministic mean-field path) and ensembles (seeded Gillespie or tau-leaping cells) of this lab, newest first.</p>
        </div>
        {canLaunch ? (
          <Link href={`/labs/${labId}/runs/new`} className="rounded-md bg-ochre px-3 py-2 text-sm font-medium text-white no-underline hover:bg-ochre-dark">
            New run
          </Link>
        ) : (
          <p className="text-sm text-ink-soft">Read-only: a reviewer sees every run and downloads results, and launches none.</p>
        )}
      </div>
      <RunsTable labId={labId} canLaunch={canLaunch} status={status} circuit={circuit} page={page} />
    </div>
  );
}
