/** What an empty section shows: what belongs here, and how it gets here. */
export function EmptyState({ title, children }: { title: string; children: React.ReactNode }) {
  return (
    <section className="rounded-lg border border-dashed border-ink/20 bg-white px-6 py-10 text-center">
      <h2 className="text-lg font-semibold">{title}</h2>
      <div className="mx-auto mt-2 max-w-xl text-sm text-ink-soft">{children}</div>
    </section>
  );
}
