import type { Metadata } from "next";
import Link from "next/link";

import { Caution } from "@/app/_components/caution";
import { may } from "@/lib/access";
import { requirePageLab } from "@/lib/auth/page";

export const metadata: Metadata = { title: "Overview" };

export default async function LabOverview({ params }: { params: Promise<{ labId: string }> }) {
  const { labId } = await params;
  const { lab } = await requirePageLab(labId, `/labs/${labId}`);
  const canWrite = may(lab.role, "circuit:write");
  return (
    <div className="flex flex-col gap-6">
      <div>
        <h1 className="text-2xl font-semibold">{lab.name}</h1>
        <p className="mt-1 text-ink-soft">
          Design gene circuits in bench units, run seeded stochastic ensembles, and compare designs on CV, Fano factor
          and period precision. You are a <strong>{lab.role}</strong> here
          {canWrite ? ": you can write circuits and launch runs." : ": you can read everything and download data; you change nothing."}
        </p>
      </div>
      <Caution withBiosafety />
      <ul className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
        {[
          { href: "circuits", title: "Circuits", text: "Species, rate laws and their saved versions." },
          { href: "runs", title: "Runs", text: "Traces and ensembles, with bands and noise tables." },
          { href: "comparisons", title: "Comparisons", text: "Designs and sweeps side by side on noise." },
          { href: "data", title: "Data", text: "Measured datasets to lay over simulations." },
        ].map((c) => (
          <li key={c.href}>
            <Link href={`/labs/${labId}/${c.href}`} className="block h-full rounded-lg border border-ink/10 bg-white p-4 text-ink no-underline hover:border-ochre">
              <span className="font-semibold">{c.title}</span>
              <span className="mt-1 block text-sm text-ink-soft">{c.text}</span>
            </Link>
          </li>
        ))}
      </ul>
    </div>
  );
}
