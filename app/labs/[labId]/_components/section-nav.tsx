"use client";

import Link from "next/link";
import { usePathname } from "next/navigation";

const SECTIONS = [
  { slug: "", label: "Overview" },
  { slug: "circuits", label: "Circuits" },
  { slug: "runs", label: "Runs" },
  { slug: "comparisons", label: "Comparisons" },
  { slug: "data", label: "Data" },
  { slug: "members", label: "Lab" },
];

export function SectionNav({ labId }: { labId: string }) {
  const pathname = usePathname();
  const active = pathname.split("/")[3] ?? "";
  return (
    <nav aria-label="Sections" className="mx-auto flex max-w-6xl gap-1 overflow-x-auto px-4">
      {SECTIONS.map((s) => {
        const isActive = s.slug === active;
        return (
          <Link
            key={s.slug} href={`/labs/${labId}${s.slug ? `/${s.slug}` : ""}`} aria-current={isActive ? "page" : undefined}
            className={`border-b-2 px-3 py-2 text-sm no-underline ${isActive ? "border-ochre font-semibold text-ink" : "border-transparent text-ink-soft hover:text-ink"}`}
          >
            {s.label}
          </Link>
        );
      })}
    </nav>
  );
}
