import type { CircuitDiff, FieldChange, SectionDiff } from "@/lib/view/circuit-diff";

const FIELD_LABEL: Record<string, string> = {
  "rate.law": "rate law", "rate.k": "k", "rate.input": "input species", "rate.vmax": "vmax", "rate.K": "K", "rate.n": "n",
  "rate.basal": "basal leak", "rate.expression": "formula", "units.time": "time unit", "units.amount": "amount unit",
  volume_fL: "cell volume (fL)", value: "value", initial: "initial amount", unit: "unit", note: "note",
};

function Change({ c }: { c: FieldChange }) {
  return (
    <span>
      {FIELD_LABEL[c.field] ?? c.field}:{" "}
      {c.from === null ? <em className="text-ink-soft">none</em> : <del className="rounded bg-red-50 px-1 text-red-800 decoration-red-400">{c.from}</del>}
      {" → "}
      {c.to === null ? <em className="text-ink-soft">none</em> : <ins className="rounded bg-moss-light px-1 text-moss no-underline">{c.to}</ins>}
    </span>
  );
}

function Section({ title, s, noun }: { title: string; s: SectionDiff; noun: string }) {
  if (!s.added.length && !s.removed.length && !s.changed.length && !s.reordered) return null;
  return (
    <section className="flex flex-col gap-1" aria-label={`${title} changes`}>
      <h3 className="font-semibold">{title}</h3>
      <ul className="flex flex-col gap-1 text-sm">
        {s.changed.map((x) => (
          <li key={`c-${x.id}`} data-testid={`diff-${noun}-${x.id}`}>
            <span className="font-medium">{x.id}</span>
            <span className="text-ink-soft"> changed: </span>
            {x.changes.map((c, i) => <span key={c.field}>{i > 0 && "; "}<Change c={c} /></span>)}
          </li>
        ))}
        {s.added.map((x) => (
          <li key={`a-${x.id}`}><span className="rounded bg-moss-light px-1 text-xs font-medium text-moss">added</span> <span className="font-medium">{x.id}</span> <span className="text-ink-soft">{x.summary}</span></li>
        ))}
        {s.removed.map((x) => (
          <li key={`r-${x.id}`}><span className="rounded bg-red-50 px-1 text-xs font-medium text-red-800">removed</span> <span className="font-medium">{x.id}</span> <span className="text-ink-soft">{x.summary}</span></li>
        ))}
        {s.reordered && <li className="text-ink-soft">The {noun} list is in a different order.</li>}
      </ul>
    </section>
  );
}

/** A readable diff of two versions (server-rendered; no state). */
export function VersionDiff({ diff, from, to }: { diff: CircuitDiff; from: number; to: number }) {
  if (diff.isEmpty) return <p className="text-sm text-ink-soft">Versions {from} and {to} hold the same circuit.</p>;
  return (
    <div className="flex flex-col gap-4" data-testid="version-diff">
      {diff.circuit.length > 0 && (
        <section className="flex flex-col gap-1" aria-label="Settings changes">
          <h3 className="font-semibold">Name and units</h3>
          <ul className="flex flex-col gap-1 text-sm">{diff.circuit.map((c) => <li key={c.field}><Change c={c} /></li>)}</ul>
        </section>
      )}
      <Section title="Parameters" s={diff.parameters} noun="parameter" />
      <Section title="Species" s={diff.species} noun="species" />
      <Section title="Reactions" s={diff.reactions} noun="reaction" />
    </div>
  );
}
