"use client";

import dynamic from "next/dynamic";

import type { VegaChartProps } from "./vega-chart";

/** Placeholder of a chart's size while vega loads (its chunk is large). */
export function ChartSkeleton({ height = 300 }: { height?: number }) {
  return <div aria-hidden className="w-full animate-pulse rounded-md bg-ink/5" style={{ height }} />;
}

const VegaChart = dynamic(() => import("./vega-chart"), { ssr: false, loading: () => <ChartSkeleton /> });

/** A vega-lite chart loaded in the browser only, with SVG and PNG downloads. */
export function Chart(props: VegaChartProps) {
  return <VegaChart {...props} />;
}
