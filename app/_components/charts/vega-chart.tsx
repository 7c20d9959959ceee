"use client";

import { useCallback, useRef, useState } from "react";
import { VegaEmbed } from "react-vega";
import type { Result, VisualizationSpec } from "vega-embed";

import { downloadText, downloadUrl } from "./download";
import { EMBED_OPTIONS } from "./embed-options";

export interface VegaChartProps {
  spec: VisualizationSpec;
  /** File name without extension for the SVG and PNG downloads. */
  fileBase: string;
  /** Accessible name of the figure (the chart's title in words). */
  label: string;
}

/** A vega-lite chart with SVG and PNG downloads through the view's toSVG()/toImageURL(). */
export default function VegaChart({ spec, fileBase, label }: VegaChartProps) {
  const view = useRef<Result["view"] | null>(null);
  const [ready, setReady] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const onEmbed = useCallback((r: Result) => {
    view.current = r.view;
    setReady(true);
  }, []);
  const onError = useCallback((e: unknown) => setError(e instanceof Error ? e.message : String(e)), []);
  const saveSvg = async () => {
    if (view.current) downloadText(`${fileBase}.svg`, await view.current.toSVG(), "image/svg+xml");
  };
  const savePng = async () => {
    if (view.current) downloadUrl(`${fileBase}.png`, await view.current.toImageURL("png", 2));
  };
  return (
    <figure aria-label={label} className="flex flex-col gap-2">
      {error ? (
        <p role="alert" className="rounded-md bg-red-50 px-3 py-2 text-sm text-red-800">The chart could not be drawn: {error}</p>
      ) : (
        <VegaEmbed spec={spec} options={EMBED_OPTIONS} onEmbed={onEmbed} onError={onError} className="w-full [&_text]:font-sans" />
      )}
      <figcaption className="flex flex-wrap items-center justify-end gap-2 text-xs">
        <button type="button" onClick={saveSvg} disabled={!ready} className="rounded border border-ink/20 bg-white px-2 py-1 text-ink-soft hover:border-ochre hover:text-ink disabled:opacity-50">
          SVG<span className="sr-only"> of {label}</span>
        </button>
        <button type="button" onClick={savePng} disabled={!ready} className="rounded border border-ink/20 bg-white px-2 py-1 text-ink-soft hover:border-ochre hover:text-ink disabled:opacity-50">
          PNG<span className="sr-only"> of {label}</span>
        </button>
      </figcaption>
    </figure>
  );
}
