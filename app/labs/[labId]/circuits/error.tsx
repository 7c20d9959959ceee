"use client";

/** The circuits section failed to render: say so and offer a retry. */
export default function CircuitsError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <section role="alert" className="rounded-lg border border-red-200 bg-red-50 p-4 text-sm text-red-800">
      <h1 className="text-lg font-semibold">Circuits could not be loaded.</h1>
      <p className="mt-1">The server failed while reading this lab&apos;s circuits{error.digest ? ` (reference ${error.digest})` : ""}. Nothing was changed.</p>
      <button type="button" onClick={reset} className="mt-3 rounded-md border border-red-300 bg-white px-3 py-1.5 text-red-800 hover:bg-red-100">
        Try again
      </button>
    </section>
  );
}
