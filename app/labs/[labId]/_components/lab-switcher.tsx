"use client";

import { usePathname, useRouter } from "next/navigation";

export interface LabSwitcherProps { labs: { id: string; name: string; role: string }[]; current: string }

/** Moves to the same section of another lab. */
export function LabSwitcher({ labs, current }: LabSwitcherProps) {
  const router = useRouter();
  const pathname = usePathname();
  return (
    <label className="flex items-center gap-2 text-sm">
      <span className="sr-only">Lab</span>
      <select
        aria-label="Lab" value={current}
        onChange={(e) => {
          const section = pathname.split("/")[3];
          router.push(`/labs/${e.target.value}${section ? `/${section}` : ""}`);
        }}
        className="rounded-md border border-ink/20 bg-paper px-2 py-1 font-medium"
      >
        {labs.map((l) => <option key={l.id} value={l.id}>{l.name}</option>)}
      </select>
    </label>
  );
}
