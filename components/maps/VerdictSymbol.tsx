/**
 * A verdict's swatch with its glyph, as inline SVG for HTML places (the pair matrix, legends,
 * counts): the same colour and glyph geometry as the canvas map, so a verdict reads the same
 * without colour everywhere.
 *
 * Props: `verdict`; `size` (CSS px, default 14); `fill` (default true: the verdict's colour
 * behind the glyph; false draws the glyph alone in the current text colour).
 */
import type { Verdict } from "@/lib/physics/types";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import { glyphIsFilled, glyphSvgPath } from "@/lib/charts/glyphs";
import { inkOn } from "./map-model";

export function VerdictSymbol({ verdict, size = 14, fill = true, className }: { verdict: Verdict; size?: number; fill?: boolean; className?: string }) {
  const style = VERDICT_STYLES[verdict];
  const ink = fill ? inkOn(style.colour) : "currentColor";
  const path = glyphSvgPath(style.glyph, 12, 12, 12);
  return (
    <svg viewBox="0 0 24 24" width={size} height={size} aria-hidden="true" className={className} data-glyph={style.glyph}>
      {fill ? <rect x="0.5" y="0.5" width="23" height="23" rx="3" fill={style.colour} stroke="rgba(0,0,0,0.25)" /> : null}
      {path ? (
        glyphIsFilled(style.glyph) ? (
          <path d={path} fill={ink} />
        ) : (
          <path d={path} fill="none" stroke={ink} strokeWidth={2.4} strokeLinecap="round" strokeLinejoin="round" />
        )
      ) : null}
    </svg>
  );
}
