/** The caution PRODUCT.md asks us to show near results and on the home page. */
export function Caution({ withBiosafety = false }: { withBiosafety?: boolean }) {
  return (
    <aside role="note" className="rounded-md border border-ochre/40 bg-ochre-light/60 px-4 py-3 text-sm text-ink">
      <strong className="font-semibold">Prediction, not measurement.</strong> Simulated noise is what a model
      predicts for single cells; it is not a measurement of them.
      {withBiosafety && (
        <> Circuits built in a lab follow your institution&apos;s biosafety rules; Burstwise decides nothing about that.</>
      )}
    </aside>
  );
}
