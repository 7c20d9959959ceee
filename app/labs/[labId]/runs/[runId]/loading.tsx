/** Skeleton of a run page while the server reads the run. */
export default function LoadingRun() {
  return (
    <div aria-busy="true" aria-label="Loading run" className="flex flex-col gap-6">
      <div className="h-8 w-64 animate-pulse rounded bg-ink/10" />
      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_20rem]">
        <div className="flex flex-col gap-4">
          <div className="h-12 animate-pulse rounded bg-ink/5" />
          <div className="h-72 animate-pulse rounded bg-ink/5" />
          <div className="h-40 animate-pulse rounded bg-ink/5" />
        </div>
        <div className="h-96 animate-pulse rounded bg-ink/5" />
      </div>
    </div>
  );
}
