/** Skeleton of a circuit's tab while the server reads the version. */
export default function CircuitLoading() {
  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_360px]" aria-busy="true" aria-label="Loading the circuit">
      <div className="flex flex-col gap-4">
        <div className="h-8 w-48 animate-pulse rounded bg-ink/5" />
        <div className="h-36 animate-pulse rounded-lg bg-ink/5" />
        <div className="h-44 animate-pulse rounded-lg bg-ink/5" />
        <div className="h-72 animate-pulse rounded-lg bg-ink/5" />
      </div>
      <div className="flex flex-col gap-4">
        <div className="h-40 animate-pulse rounded-lg bg-ink/5" />
        <div className="h-80 animate-pulse rounded-lg bg-ink/5" />
      </div>
    </div>
  );
}
