"use client";

/** A circuit tab that failed to render: say so, keep the header and tabs, offer a retry. */
export default function CircuitError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <section role="alert" className="rounded-lg border border-red-200 bg-red-50 p-4 text-sm text-red-800">
      <h2 className="font-semibold">This view could not be shown.</h2>
      <p className="mt-1">
        Something failed while reading this circuit version{error.digest ? ` (reference ${error.digest})` : ""}. The version itself is unchanged.
      </p>
      <button type="button" onClick={reset} className="mt-3 rounded-md border border-red-300 bg-white px-3 py-1.5 text-red-800 hover:bg-red-100">
        Try again
      </button>
    </section>
  );
}
