"use client";

/** A run page that failed to render: the reason and a retry. */
export default function RunPageError({ error, reset }: { error: Error; reset: () => void }) {
  return (
    <div role="alert" className="rounded-lg border border-red-300 bg-red-50 p-4 text-sm text-red-800">
      <p className="font-semibold">This run could not be shown.</p>
      <p className="mt-1">{error.message}</p>
      <button type="button" onClick={reset} className="mt-3 rounded-md border border-red-300 bg-white px-3 py-1">Try again</button>
    </div>
  );
}
