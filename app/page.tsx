import Link from "next/link";
import { getServerSession } from "next-auth";

import { Caution } from "@/app/_components/caution";
import { Logo } from "@/app/_components/logo";
import { authOptions } from "@/lib/auth/options";

export const dynamic = "force-dynamic";

export default async function HomePage() {
  const session = await getServerSession(authOptions);
  const labs = session?.user?.labs ?? [];
  return (
    <main className="mx-auto flex max-w-3xl flex-col gap-8 px-6 py-16">
      <Logo className="text-2xl text-ink" />
      <h1 className="text-3xl font-semibold leading-tight">
        Know how noisy a gene circuit will be in single cells before you clone it.
      </h1>
      <p className="text-lg text-ink-soft">
        Write the circuit in bench units (nM, per minute, cell volume); Burstwise converts it to molecule counts, traces
        the mean-field dynamics, runs seeded stochastic ensembles of thousands of cells, and reports each protein&apos;s
        CV, Fano factor and period spread, so your lab can compare designs on noise.
      </p>
      <Caution withBiosafety />
      {session?.user ? (
        <section aria-labelledby="your-labs" className="flex flex-col gap-3">
          <h2 id="your-labs" className="text-lg font-semibold">Your labs</h2>
          <ul className="flex flex-wrap gap-3">
            {labs.map((lab) => (
              <li key={lab.id}>
                <Link href={`/labs/${lab.id}`} className="inline-block rounded-md bg-ink px-4 py-2 text-paper no-underline hover:bg-ink-soft">
                  {lab.name} <span className="text-xs opacity-75">({lab.role})</span>
                </Link>
              </li>
            ))}
          </ul>
        </section>
      ) : (
        <div className="flex gap-3">
          <Link href="/signin" className="rounded-md bg-ochre px-4 py-2 font-medium text-white no-underline hover:bg-ochre-dark">Sign in</Link>
          <Link href="/signup" className="rounded-md border border-ink/20 px-4 py-2 font-medium text-ink no-underline hover:bg-white">Create an account</Link>
        </div>
      )}
    </main>
  );
}
