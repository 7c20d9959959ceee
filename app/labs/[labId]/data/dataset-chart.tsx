"use client";

import dynamic from "next/dynamic";
import type { VisualizationSpec } from "vega-embed";

import { EMBED_OPTIONS } from "@/app/_components/charts/embed-options";

// vega's chunk is large: load it in the browser only, after the page.
const VegaEmbed = dynamic(() => import("react-vega").then((m) => m.VegaEmbed), {
  ssr: false, loading: () => <div aria-hidden className="h-64 w-full animate-pulse rounded-md bg-ink/5" />,
});

/** A dataset's chart (series lines or snapshot histogram), drawn as SVG. */
export function DatasetChart({ spec, label }: { spec: VisualizationSpec; label: string }) {
  return (
    <figure aria-label={label} className="w-full rounded-lg border border-ink/10 bg-white p-3">
      <VegaEmbed spec={spec} options={EMBED_OPTIONS} className="w-full" />
    </figure>
  );
}
