"use client";

import { useId } from "react";

import { layoutCircle, type Point, type Wiring, type WiringEdge, type WiringKind } from "@/lib/view/circuit-wiring";

export interface CircuitWiringProps {
  wiring: Wiring;
  /** Names the drawing for screen readers: "Wiring of <title>". */
  title: string;
}

const W = 360;
const H = 300;
const NODE_R = 22;

const STYLE: Record<WiringKind, { color: string; dash?: string; width: number; label: string; verb: string }> = {
  activation: { color: "#3f6212", width: 2.2, label: "activates (Hill)", verb: "activates" },
  repression: { color: "#9a3412", width: 2.2, label: "represses (Hill)", verb: "represses" },
  conversion: { color: "#4a5568", width: 1.4, label: "converts to / makes (mass action)", verb: "makes" },
  influence: { color: "#4a5568", width: 1.4, dash: "5 4", label: "enters the formula of", verb: "enters the rate of" },
};

const unit = (dx: number, dy: number) => {
  const d = Math.hypot(dx, dy) || 1;
  return { x: dx / d, y: dy / d };
};

/** A curved edge between two nodes, bent to its left so A→B and B→A stay apart; ends trimmed at the circles. */
function edgePath(p: Point, q: Point, gapEnd: number): string {
  const mx = (p.x + q.x) / 2;
  const my = (p.y + q.y) / 2;
  const n = unit(q.y - p.y, -(q.x - p.x));
  const bend = 0.16 * Math.hypot(q.x - p.x, q.y - p.y);
  const c = { x: mx + n.x * bend, y: my + n.y * bend };
  const u1 = unit(c.x - p.x, c.y - p.y);
  const u2 = unit(c.x - q.x, c.y - q.y);
  const s = { x: p.x + u1.x * (NODE_R + 2), y: p.y + u1.y * (NODE_R + 2) };
  const e = { x: q.x + u2.x * (NODE_R + gapEnd), y: q.y + u2.y * (NODE_R + gapEnd) };
  return `M${s.x.toFixed(1)},${s.y.toFixed(1)} Q${c.x.toFixed(1)},${c.y.toFixed(1)} ${e.x.toFixed(1)},${e.y.toFixed(1)}`;
}

/** A loop on the outer side of a node (the side away from the drawing's centre). */
function loopPath(p: Point): string {
  const out = unit(p.x - W / 2, p.y - H / 2);
  const dir = out.x === 0 && out.y === 0 ? { x: 0, y: -1 } : out;
  const a = Math.atan2(dir.y, dir.x);
  const at = (angle: number, r: number) => ({ x: p.x + r * Math.cos(angle), y: p.y + r * Math.sin(angle) });
  const s = at(a - 0.5, NODE_R + 2);
  const e = at(a + 0.5, NODE_R + 6);
  const c1 = at(a - 0.9, NODE_R + 40);
  const c2 = at(a + 0.9, NODE_R + 40);
  return `M${s.x.toFixed(1)},${s.y.toFixed(1)} C${c1.x.toFixed(1)},${c1.y.toFixed(1)} ${c2.x.toFixed(1)},${c2.y.toFixed(1)} ${e.x.toFixed(1)},${e.y.toFixed(1)}`;
}

/** Shifts a layout so its bounding box sits in the middle of the drawing (a triangle is top-heavy on its circle). */
function centred(pos: Map<string, Point>): Map<string, Point> {
  const ps = [...pos.values()];
  if (ps.length === 0) return pos;
  const dx = W / 2 - (Math.min(...ps.map((p) => p.x)) + Math.max(...ps.map((p) => p.x))) / 2;
  const dy = H / 2 - (Math.min(...ps.map((p) => p.y)) + Math.max(...ps.map((p) => p.y))) / 2;
  return new Map([...pos].map(([id, p]) => [id, { x: p.x + dx, y: p.y + dy }]));
}

const describeEdge = (e: WiringEdge) => `${e.from} ${STYLE[e.kind].verb} ${e.to} (${e.reactions.join(", ")})`;

/**
 * Which species acts on which, as an SVG the modeler can read the loop from: Hill activation ends
 * in an arrow, Hill repression in a bar, mass-action conversions are thin grey arrows, and species
 * read by a formula are dashed. The same edges are listed in text below the drawing.
 */
export function CircuitWiring({ wiring, title }: CircuitWiringProps) {
  const uid = useId().replace(/[^A-Za-z0-9_-]/g, "");
  const pos = centred(layoutCircle(wiring.nodes, W / 2, H / 2, Math.min(W, H) / 2 - 52));
  const marker = (kind: WiringKind) => `url(#${uid}-${kind})`;
  const kinds = (Object.keys(STYLE) as WiringKind[]).filter((k) => wiring.edges.some((e) => e.kind === k));
  return (
    <figure className="flex flex-col gap-2">
      <svg
        viewBox={`0 0 ${W} ${H}`} role="img" aria-labelledby={`${uid}-title`}
        className="h-auto w-full max-w-[420px] rounded-md border border-ink/10 bg-white" data-testid="wiring-svg"
      >
        <title id={`${uid}-title`}>{`Wiring of ${title}: ${wiring.edges.length ? wiring.edges.map(describeEdge).join("; ") : "no species acts on another"}`}</title>
        <defs>
          {(["activation", "conversion", "influence"] as const).map((k) => (
            <marker key={k} id={`${uid}-${k}`} viewBox="0 0 10 10" refX="8" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse">
              <path d="M0,0 L10,5 L0,10 z" fill={STYLE[k].color} />
            </marker>
          ))}
          <marker id={`${uid}-repression`} viewBox="0 0 4 12" refX="2" refY="6" markerWidth="4" markerHeight="12" markerUnits="userSpaceOnUse" orient="auto">
            <rect x="0.5" y="0" width="3" height="12" fill={STYLE.repression.color} />
          </marker>
        </defs>
        {wiring.edges.map((e) => {
          const p = pos.get(e.from);
          const q = pos.get(e.to);
          if (!p || !q) return null;
          const s = STYLE[e.kind];
          const d = e.from === e.to ? loopPath(p) : edgePath(p, q, e.kind === "repression" ? 5 : 3);
          return (
            <path
              key={`${e.from}-${e.to}-${e.kind}`} d={d} fill="none" stroke={s.color} strokeWidth={s.width}
              strokeDasharray={s.dash} markerEnd={marker(e.kind)} data-kind={e.kind}
            >
              <title>{describeEdge(e)}</title>
            </path>
          );
        })}
        {wiring.nodes.map((id) => {
          const p = pos.get(id);
          if (!p) return null;
          const label = id.length > 6 ? `${id.slice(0, 5)}…` : id;
          return (
            <g key={id}>
              <circle cx={p.x} cy={p.y} r={NODE_R} fill="#faf8f4" stroke="#1d2433" strokeWidth="1.5" />
              <text x={p.x} y={p.y} textAnchor="middle" dominantBaseline="central" fontSize="13" fontWeight="600" fill="#1d2433">
                {label}
                <title>{id}</title>
              </text>
            </g>
          );
        })}
      </svg>
      <figcaption className="text-xs text-ink-soft">
        {kinds.length > 0 && (
          <ul className="mb-1 flex flex-wrap gap-x-4 gap-y-1" aria-label="Legend">
            {kinds.map((k) => (
              <li key={k} className="flex items-center gap-1.5">
                <svg width="30" height="10" aria-hidden>
                  <line x1="1" y1="5" x2={k === "repression" ? 27 : 24} y2="5" stroke={STYLE[k].color} strokeWidth={STYLE[k].width} strokeDasharray={STYLE[k].dash} />
                  {k === "repression"
                    ? <rect x="27" y="0" width="3" height="10" fill={STYLE[k].color} />
                    : <path d="M23,1 L30,5 L23,9 z" fill={STYLE[k].color} />}
                </svg>
                {STYLE[k].label}
              </li>
            ))}
          </ul>
        )}
        {wiring.edges.length === 0 ? (
          <p>No species acts on another: production and loss only.</p>
        ) : (
          <ul className="list-inside list-disc" data-testid="wiring-edges">
            {wiring.edges.map((e) => <li key={`${e.from}-${e.to}-${e.kind}`}>{describeEdge(e)}</li>)}
          </ul>
        )}
      </figcaption>
    </figure>
  );
}
