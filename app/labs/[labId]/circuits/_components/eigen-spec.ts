import type { VisualizationSpec } from "vega-embed";

/**
 * The vega-lite spec of eigenvalues in the complex plane, with the imaginary axis drawn: points to
 * its right grow, points to its left decay; a pair off the real axis turns.
 */
export function eigenSpec(eigenvalues: { re: number; im: number }[], timeUnit: string): VisualizationSpec {
  const values = eigenvalues.map((l, i) => ({
    index: i + 1, re: l.re, im: l.im,
    side: l.re > 0 ? "right half: grows" : l.re < 0 ? "left half: decays" : "on the axis",
  }));
  return {
    $schema: "https://vega.github.io/schema/vega-lite/v6.json",
    title: { text: "Eigenvalues of the Jacobian at the steady state", fontSize: 13, anchor: "start" },
    width: 320,
    height: 220,
    background: "white",
    data: { values },
    layer: [
      { mark: { type: "rule", color: "#9a3412", strokeDash: [5, 4], strokeWidth: 1.5 }, encoding: { x: { datum: 0, type: "quantitative" } } },
      { mark: { type: "rule", color: "#cbd5e1" }, encoding: { y: { datum: 0, type: "quantitative" } } },
      {
        mark: { type: "point", filled: true, size: 90, opacity: 0.9 },
        encoding: {
          x: { field: "re", type: "quantitative", title: `Re λ (1/${timeUnit})`, scale: { zero: true, nice: true } },
          y: { field: "im", type: "quantitative", title: `Im λ (1/${timeUnit})`, scale: { zero: true, nice: true } },
          color: {
            field: "side", type: "nominal", title: "Half-plane",
            scale: { domain: ["left half: decays", "on the axis", "right half: grows"], range: ["#3f6212", "#64748b", "#b45309"] },
            legend: { orient: "bottom", direction: "vertical" },
          },
          tooltip: [
            { field: "index", title: "#" },
            { field: "re", title: "Re λ", format: ".4g" },
            { field: "im", title: "Im λ", format: ".4g" },
          ],
        },
      },
    ],
  };
}
