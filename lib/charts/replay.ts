/**
 * Pure geometry of the trajectory replay: where each body is at a time between samples, the
 * world rectangle that holds the whole run, and the world → canvas transform that fits it.
 */
import { clipSegment } from "./overlays";

/** A static wall: the line n·p = offset (n a unit normal pointing into the free side). */
export interface ReplayWall {
  normalX: number;
  normalY: number;
  offsetM: number;
}

export interface WorldBounds {
  minX: number;
  minY: number;
  maxX: number;
  maxY: number;
}

/** The sample interval holding time t: samples[index] ≤ t ≤ samples[index + 1], with the fraction between them. */
export function sampleAt(tS: ArrayLike<number>, t: number): { index: number; fraction: number } {
  const n = tS.length;
  if (n === 0) throw new Error("the time series has no samples");
  if (n === 1 || t <= tS[0]) return { index: 0, fraction: 0 };
  if (t >= tS[n - 1]) return { index: n - 1, fraction: 0 };
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (tS[mid] <= t) lo = mid;
    else hi = mid;
  }
  const span = tS[hi] - tS[lo];
  return { index: lo, fraction: span > 0 ? (t - tS[lo]) / span : 0 };
}

/** Linear interpolation of a sampled quantity at (index, fraction). */
export function interpolateAt(values: ArrayLike<number>, at: { index: number; fraction: number }): number {
  const a = values[at.index];
  if (at.fraction === 0 || at.index + 1 >= values.length) return a;
  return a + (values[at.index + 1] - a) * at.fraction;
}

/**
 * The rectangle holding every disc at every sample (finite positions only; a run that blew up
 * to ±∞ is framed by what stayed finite). Null if no position is finite.
 */
export function trajectoryBounds(bodies: readonly { xM: ArrayLike<number>; yM: ArrayLike<number> }[], radiiM: readonly number[]): WorldBounds | null {
  let minX = Number.POSITIVE_INFINITY;
  let minY = Number.POSITIVE_INFINITY;
  let maxX = Number.NEGATIVE_INFINITY;
  let maxY = Number.NEGATIVE_INFINITY;
  bodies.forEach((body, b) => {
    const r = radiiM[b] ?? 0;
    for (let i = 0; i < body.xM.length; i++) {
      const x = body.xM[i];
      const y = body.yM[i];
      if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
      if (x - r < minX) minX = x - r;
      if (x + r > maxX) maxX = x + r;
      if (y - r < minY) minY = y - r;
      if (y + r > maxY) maxY = y + r;
    }
  });
  if (!(minX <= maxX)) return null;
  return { minX, minY, maxX, maxY };
}

/** Grow bounds to include the walls' nearest points to the bounds' centre (when within `reachM`). */
export function includeWalls(bounds: WorldBounds, walls: readonly ReplayWall[], reachM: number): WorldBounds {
  const out = { ...bounds };
  const cx = (bounds.minX + bounds.maxX) / 2;
  const cy = (bounds.minY + bounds.maxY) / 2;
  for (const wall of walls) {
    const distance = wall.normalX * cx + wall.normalY * cy - wall.offsetM;
    if (Math.abs(distance) > reachM) continue;
    const px = cx - distance * wall.normalX;
    const py = cy - distance * wall.normalY;
    out.minX = Math.min(out.minX, px);
    out.maxX = Math.max(out.maxX, px);
    out.minY = Math.min(out.minY, py);
    out.maxY = Math.max(out.maxY, py);
  }
  return out;
}

/** World (m, y up) → canvas (px, y down): px = offsetX + x·scale, py = offsetY − y·scale. */
export interface ViewTransform {
  scalePxPerM: number;
  offsetXPx: number;
  offsetYPx: number;
}

/** The transform that fits bounds into a width × height canvas with a padding, same scale on both axes, centred. */
export function fitView(bounds: WorldBounds, widthPx: number, heightPx: number, paddingPx: number): ViewTransform {
  const spanX = Math.max(bounds.maxX - bounds.minX, 1e-12);
  const spanY = Math.max(bounds.maxY - bounds.minY, 1e-12);
  const usableX = Math.max(1, widthPx - 2 * paddingPx);
  const usableY = Math.max(1, heightPx - 2 * paddingPx);
  const scalePxPerM = Math.min(usableX / spanX, usableY / spanY);
  const cx = (bounds.minX + bounds.maxX) / 2;
  const cy = (bounds.minY + bounds.maxY) / 2;
  return { scalePxPerM, offsetXPx: widthPx / 2 - cx * scalePxPerM, offsetYPx: heightPx / 2 + cy * scalePxPerM };
}

export function worldToCanvas(view: ViewTransform, x: number, y: number): [number, number] {
  return [view.offsetXPx + x * view.scalePxPerM, view.offsetYPx - y * view.scalePxPerM];
}

/** The visible piece of a wall line on a width × height canvas, in canvas pixels, or null. */
export function wallSegmentOnCanvas(wall: ReplayWall, view: ViewTransform, widthPx: number, heightPx: number): [number, number, number, number] | null {
  const px = wall.normalX * wall.offsetM;
  const py = wall.normalY * wall.offsetM;
  const [cx, cy] = worldToCanvas(view, px, py);
  // Direction along the wall in canvas pixels (y flipped); long enough to cross the canvas.
  const length = 4 * (widthPx + heightPx);
  const dx = -wall.normalY;
  const dy = -wall.normalX;
  return clipSegment(cx - dx * length, cy - dy * length, cx + dx * length, cy + dy * length, { left: 0, top: 0, width: widthPx, height: heightPx });
}

/**
 * Bounds of the bodies at one moment (all of them, or one), for a camera that follows them. The
 * span never falls below `minSpanM`, so a lone disc is shown with room around it rather than
 * filling the view.
 */
export function boundsAt(
  bodies: readonly { xM: ArrayLike<number>; yM: ArrayLike<number> }[],
  radiiM: readonly number[],
  at: { index: number; fraction: number },
  only: number | null,
  minSpanM: number,
): WorldBounds | null {
  let minX = Number.POSITIVE_INFINITY;
  let minY = Number.POSITIVE_INFINITY;
  let maxX = Number.NEGATIVE_INFINITY;
  let maxY = Number.NEGATIVE_INFINITY;
  bodies.forEach((body, b) => {
    if (only !== null && b !== only) return;
    const x = interpolateAt(body.xM, at);
    const y = interpolateAt(body.yM, at);
    if (!Number.isFinite(x) || !Number.isFinite(y)) return;
    const r = radiiM[b] ?? 0;
    minX = Math.min(minX, x - r);
    maxX = Math.max(maxX, x + r);
    minY = Math.min(minY, y - r);
    maxY = Math.max(maxY, y + r);
  });
  if (!(minX <= maxX)) return null;
  const cx = (minX + maxX) / 2;
  const cy = (minY + maxY) / 2;
  const half = Math.max(maxX - minX, maxY - minY, minSpanM) / 2;
  return { minX: cx - half, maxX: cx + half, minY: cy - half, maxY: cy + half };
}

/**
 * The median duration (s) of the stretches of consecutive samples with any overlap: how long a
 * contact lasts in this run, for slowing the replay around contacts. Null without contact.
 */
export function typicalContactS(tS: ArrayLike<number>, overlapM: ArrayLike<number>): number | null {
  const durations: number[] = [];
  let start = -1;
  for (let i = 0; i <= overlapM.length; i++) {
    const touching = i < overlapM.length && overlapM[i] > 0;
    if (touching && start < 0) start = i;
    if (!touching && start >= 0) {
      const end = Math.min(i, tS.length - 1);
      durations.push(Math.max(tS[end] - tS[Math.max(0, start - 1)], 0));
      start = -1;
    }
  }
  if (durations.length === 0) return null;
  durations.sort((a, b) => a - b);
  return durations[Math.floor(durations.length / 2)];
}

/** A friction contact of the replay: where it touches (world m) and whether it slides. */
export interface ReplayFrictionContact {
  xM: number;
  yM: number;
  sliding: boolean;
}

/**
 * The friction contacts of one sample (series.frictionContacts, flat (body, other, sliding)
 * triples) placed where the bodies touch: between two discs on the line of centres at the first
 * disc's radius scaled to the gap, on a wall at the foot of the perpendicular from the disc's
 * centre. Positions are the sample's own (no interpolation: a contact's state belongs to a sample).
 */
export function frictionContactsAt(
  bodies: readonly { xM: ArrayLike<number>; yM: ArrayLike<number> }[],
  radiiM: readonly number[],
  walls: readonly ReplayWall[],
  triples: readonly number[],
  sample: number,
): ReplayFrictionContact[] {
  const out: ReplayFrictionContact[] = [];
  for (let k = 0; k + 2 < triples.length; k += 3) {
    const a = triples[k];
    const b = triples[k + 1];
    const sliding = triples[k + 2] === 1;
    const body = bodies[a];
    if (!body) continue;
    const ax = body.xM[sample];
    const ay = body.yM[sample];
    if (b >= 0) {
      const other = bodies[b];
      if (!other) continue;
      const dx = other.xM[sample] - ax;
      const dy = other.yM[sample] - ay;
      const ra = radiiM[a] ?? 0;
      const rb = radiiM[b] ?? 0;
      // The point splits the overlap in proportion to the radii (the midpoint for equal discs).
      const share = ra + rb > 0 ? ra / (ra + rb) : 0.5;
      out.push({ xM: ax + dx * share, yM: ay + dy * share, sliding });
    } else {
      const wall = walls[-1 - b];
      if (!wall) continue;
      const distance = wall.normalX * ax + wall.normalY * ay - wall.offsetM;
      out.push({ xM: ax - distance * wall.normalX, yM: ay - distance * wall.normalY, sliding });
    }
    if (!Number.isFinite(out[out.length - 1].xM) || !Number.isFinite(out[out.length - 1].yM)) out.pop();
  }
  return out;
}

/** The sample nearest to (index, fraction): a contact's stick/slide state is not interpolated. */
export function nearestSample(at: { index: number; fraction: number }): number {
  return at.fraction >= 0.5 ? at.index + 1 : at.index;
}
