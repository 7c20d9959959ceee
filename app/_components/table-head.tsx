/** A column heading: its text, right-aligned for numbers, with any extra classes. */
export type Column = string | { label: string; numeric?: boolean; className?: string };

/** The header row every data table of the app shares: muted, left-aligned, one `th scope="col"` per column. */
export function TableHead({ columns }: { columns: readonly Column[] }) {
  return (
    <thead className="bg-paper text-left text-ink-soft">
      <tr>
        {columns.map((c, i) => {
          const col = typeof c === "string" ? { label: c } : c;
          const cls = ["px-3 py-2 font-medium", col.numeric ? "text-right" : "", col.className ?? ""].filter(Boolean).join(" ");
          return <th key={`${i}-${col.label}`} scope="col" className={cls}>{col.label}</th>;
        })}
      </tr>
    </thead>
  );
}
