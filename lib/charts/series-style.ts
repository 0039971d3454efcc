/**
 * Line styles for time-series charts and replay discs: five hues of equal CIE lightness (L* 58),
 * each with its own dash pattern so lines stay apart in greyscale and for any colour vision.
 * L* 58 keeps at least 3:1 contrast against both the light (#ffffff) and dark (#161b26) surfaces
 * of app/globals.css, the WCAG 2.1 minimum for graphical objects (SC 1.4.11).
 */
export const SERIES_COLOURS: readonly string[] = ["#1f94ce", "#d2714f", "#489c57", "#ba71be", "#aa8730"];

/** SVG stroke-dasharray per series ("" = solid); the canvas uses the same numbers. */
export const SERIES_DASHES: readonly string[] = ["", "7 3", "2 3", "9 3 2 3", "4 4"];

export function seriesColour(index: number): string {
  return SERIES_COLOURS[index % SERIES_COLOURS.length];
}

export function seriesDash(index: number): string {
  return SERIES_DASHES[Math.floor(index / SERIES_COLOURS.length + index) % SERIES_DASHES.length];
}
