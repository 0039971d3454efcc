"use client";
/**
 * The uploaded scene drawn before it is saved: each disc at its place and size, numbered from 1 as
 * the problems list and the cell pages number them, with an arrow for its velocity, and each wall's
 * surface. Hovering a disc names its mass, radius, place and speed.
 */
import { drawScene } from "@/lib/snapshots/drawing";
import type { SnapshotBody, SnapshotWall } from "@/lib/physics/types";

const WIDTH = 640;
const HEIGHT = 360;

export function ScenePreview({ bodies, walls }: { bodies: readonly SnapshotBody[]; walls: readonly SnapshotWall[] }) {
  const drawing = drawScene({ bodies, walls }, WIDTH, HEIGHT);
  const metresPer100px = drawing.metresPerPixel * 100;
  return (
    <figure className="space-y-2" data-testid="snapshot-preview">
      <svg
        viewBox={`0 0 ${WIDTH} ${HEIGHT}`}
        className="w-full max-w-3xl rounded-md border border-line bg-surface"
        role="img"
        aria-label={`Drawing of the scene: ${bodies.length} discs and ${walls.length} walls`}
      >
        <defs>
          <marker id="kd-velocity" viewBox="0 0 6 6" refX="5" refY="3" markerWidth="5" markerHeight="5" orient="auto-start-reverse">
            <path d="M0 0L6 3L0 6z" fill="currentColor" />
          </marker>
        </defs>
        <g className="text-ink-muted" stroke="currentColor" strokeWidth={2.5} strokeLinecap="round">
          {drawing.walls.map((wall) => (
            <g key={wall.number} data-testid="preview-wall">
              <line x1={wall.x1} y1={wall.y1} x2={wall.x2} y2={wall.y2} />
              <text x={wall.labelX} y={wall.labelY} dx={6} dy={-6} fontSize={11} stroke="none" fill="currentColor">
                Wall {wall.number}
              </text>
            </g>
          ))}
        </g>
        {drawing.discs.map((disc) => (
          <g key={disc.number} data-testid="preview-disc" data-number={disc.number} className="text-ink">
            <title>{disc.title}</title>
            <circle cx={disc.cx} cy={disc.cy} r={disc.r} fill="#cfe8df" stroke="#0f6b5c" strokeWidth={1.25} />
            {disc.arrow ? <line x1={disc.cx} y1={disc.cy} x2={disc.arrow.x} y2={disc.arrow.y} stroke="#c2410c" strokeWidth={1.5} markerEnd="url(#kd-velocity)" className="text-[#c2410c]" /> : null}
            {drawing.labelled ? (
              <text x={disc.cx} y={disc.cy} textAnchor="middle" dominantBaseline="central" fontSize={Math.max(8, Math.min(12, disc.r * 1.1))} fill="currentColor">
                {disc.number}
              </text>
            ) : null}
          </g>
        ))}
      </svg>
      <figcaption className="text-xs text-ink-muted">
        Discs numbered from 1 in file order{drawing.labelled ? "" : " (hover a disc for its number: too many discs to label)"}; arrows show {drawing.arrowSeconds > 0 ? `${Number(drawing.arrowSeconds.toPrecision(2))} s of travel` : "no motion (every disc at rest)"}. 100 px ≈{" "}
        {Number(metresPer100px.toPrecision(2))} m.
        {drawing.wallsOutside.length > 0 ? ` Walls ${drawing.wallsOutside.join(", ")} lie outside the drawn area.` : ""}
      </figcaption>
    </figure>
  );
}
