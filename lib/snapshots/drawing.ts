/**
 * A snapshot scene laid out for drawing before it is saved: discs and walls in view-box pixels,
 * numbered from 1 as users count (the file's bodies[0] is disc 1, walls[0] is wall 1), and the
 * words a problem's JSON path stands for ("bodies.3.massKg" → "Disc 4, mass (massKg)").
 * Pure: used by the upload page in the browser and by unit tests.
 */
import type { SnapshotBody, SnapshotWall } from "../physics/types";

export interface DrawnDisc {
  /** As users count: 1 for the file's first body. */
  number: number;
  cx: number;
  cy: number;
  r: number;
  /** End of the velocity arrow (the disc's travel over `arrowSeconds`), or null when at rest. */
  arrow: { x: number; y: number } | null;
  title: string;
}

export interface DrawnWall {
  number: number;
  x1: number;
  y1: number;
  x2: number;
  y2: number;
  /** Where the wall's label goes (on the wall, inside the view). */
  labelX: number;
  labelY: number;
}

export interface SceneDrawing {
  width: number;
  height: number;
  discs: DrawnDisc[];
  walls: DrawnWall[];
  /** Walls whose surface does not cross the drawn area (listed under the drawing instead). */
  wallsOutside: number[];
  /** Seconds of travel the arrows show. */
  arrowSeconds: number;
  /** Metres per view-box pixel, for the scale note. */
  metresPerPixel: number;
  /** Number labels drawn on the discs (off when there are too many discs to label). */
  labelled: boolean;
}

/** Above this many discs the numbers move to the discs' tooltips. */
export const MAX_LABELLED_DISCS = 80;

const round = (v: number) => Math.round(v * 100) / 100;
const num = (v: number) => Number(v.toPrecision(3)).toLocaleString("en-US");

export function drawScene(scene: { bodies: readonly SnapshotBody[]; walls: readonly SnapshotWall[] }, width: number, height: number): SceneDrawing {
  const { bodies, walls } = scene;
  let minX = Infinity;
  let maxX = -Infinity;
  let minY = Infinity;
  let maxY = -Infinity;
  for (const b of bodies) {
    minX = Math.min(minX, b.xM - b.radiusM);
    maxX = Math.max(maxX, b.xM + b.radiusM);
    minY = Math.min(minY, b.yM - b.radiusM);
    maxY = Math.max(maxY, b.yM + b.radiusM);
  }
  // Each wall's nearest point to the discs' centre is brought into view, so every wall shows.
  const centreX = bodies.length ? (minX + maxX) / 2 : 0;
  const centreY = bodies.length ? (minY + maxY) / 2 : 0;
  for (const w of walls) {
    const n2 = w.normalX * w.normalX + w.normalY * w.normalY;
    const d = (w.normalX * centreX + w.normalY * centreY - w.offsetM) / n2;
    const px = centreX - d * w.normalX;
    const py = centreY - d * w.normalY;
    minX = Math.min(minX, px);
    maxX = Math.max(maxX, px);
    minY = Math.min(minY, py);
    maxY = Math.max(maxY, py);
  }
  if (!Number.isFinite(minX)) [minX, maxX, minY, maxY] = [-1, 1, -1, 1];
  const span = Math.max(maxX - minX, maxY - minY, 1e-3);
  const pad = span * 0.06;
  minX -= pad;
  maxX += pad;
  minY -= pad;
  maxY += pad;
  const scale = Math.min(width / (maxX - minX), height / (maxY - minY));
  // Centre the scene in the view box; y grows upwards in the scene and downwards on screen.
  const offX = (width - (maxX - minX) * scale) / 2;
  const offY = (height - (maxY - minY) * scale) / 2;
  const toX = (x: number) => offX + (x - minX) * scale;
  const toY = (y: number) => height - offY - (y - minY) * scale;

  let fastest = 0;
  for (const b of bodies) fastest = Math.max(fastest, Math.hypot(b.vxMPerS, b.vyMPerS));
  // The fastest disc's arrow is a tenth of the view's larger side.
  const arrowSeconds = fastest > 0 ? (Math.max(maxX - minX, maxY - minY) * 0.1) / fastest : 0;
  const discs: DrawnDisc[] = bodies.map((b, i) => {
    const moving = b.vxMPerS !== 0 || b.vyMPerS !== 0;
    return {
      number: i + 1,
      cx: round(toX(b.xM)),
      cy: round(toY(b.yM)),
      r: round(Math.max(1, b.radiusM * scale)),
      arrow: moving ? { x: round(toX(b.xM + b.vxMPerS * arrowSeconds)), y: round(toY(b.yM + b.vyMPerS * arrowSeconds)) } : null,
      title: `Disc ${i + 1}: ${num(b.massKg)} kg, radius ${num(b.radiusM)} m, at (${num(b.xM)}, ${num(b.yM)}) m, moving ${num(Math.hypot(b.vxMPerS, b.vyMPerS))} m/s`,
    };
  });
  const drawnWalls: DrawnWall[] = [];
  const wallsOutside: number[] = [];
  walls.forEach((w, i) => {
    const segment = clipWall(w, minX, maxX, minY, maxY);
    if (!segment) {
      wallsOutside.push(i + 1);
      return;
    }
    const [x1, y1, x2, y2] = [toX(segment[0]), toY(segment[1]), toX(segment[2]), toY(segment[3])];
    drawnWalls.push({ number: i + 1, x1: round(x1), y1: round(y1), x2: round(x2), y2: round(y2), labelX: round(x1 + (x2 - x1) * 0.12), labelY: round(y1 + (y2 - y1) * 0.12) });
  });
  // A small disc's number may reach past its rim (the label keeps a legible 8 px at least); past
  // MAX_LABELLED_DISCS the numbers would cover the scene, so they move to the tooltips.
  return { width, height, discs, walls: drawnWalls, wallsOutside, arrowSeconds, metresPerPixel: 1 / scale, labelled: discs.length <= MAX_LABELLED_DISCS };
}

/** The part of the wall's surface line (n · p = offset) inside the rectangle, or null (Liang–Barsky clipping). */
function clipWall(w: SnapshotWall, minX: number, maxX: number, minY: number, maxY: number): [number, number, number, number] | null {
  const n2 = w.normalX * w.normalX + w.normalY * w.normalY;
  const px = (w.normalX * w.offsetM) / n2;
  const py = (w.normalY * w.offsetM) / n2;
  const dx = -w.normalY;
  const dy = w.normalX;
  let t0 = -Infinity;
  let t1 = Infinity;
  for (const [p, q] of [
    [-dx, px - minX],
    [dx, maxX - px],
    [-dy, py - minY],
    [dy, maxY - py],
  ]) {
    if (p === 0) {
      if (q < 0) return null;
      continue;
    }
    const t = q / p;
    if (p < 0) t0 = Math.max(t0, t);
    else t1 = Math.min(t1, t);
  }
  if (!(t0 < t1) || !Number.isFinite(t0) || !Number.isFinite(t1)) return null;
  return [px + t0 * dx, py + t0 * dy, px + t1 * dx, py + t1 * dy];
}

const FIELD_WORDS: Record<string, string> = {
  xM: "x position",
  yM: "y position",
  vxMPerS: "x velocity",
  vyMPerS: "y velocity",
  omegaRadPerS: "spin",
  massKg: "mass",
  radiusM: "radius",
  normalX: "normal x",
  normalY: "normal y",
  offsetM: "offset",
  gravityMPerS2: "gravity",
  name: "name",
  version: "version",
};

/**
 * Where a problem is, in words: the disc or wall by its number as users count, then the field in
 * words with its name in the file. "bodies.3.massKg" → "Disc 4, mass (massKg)".
 */
export function problemPlace(path: string): string {
  if (path === "(file)") return "File";
  if (path === "bodies") return "Discs";
  if (path === "walls") return "Walls";
  const parts = path.split(".");
  const field = (key: string | undefined) => (key === undefined ? "" : FIELD_WORDS[key] ? `${FIELD_WORDS[key]} (${key})` : key);
  const item = /^(bodies|walls)$/.test(parts[0]) && /^\d+$/.test(parts[1] ?? "") ? `${parts[0] === "bodies" ? "Disc" : "Wall"} ${Number(parts[1]) + 1}` : null;
  if (item) return parts.length > 2 ? `${item}, ${field(parts.slice(2).join("."))}` : item;
  const words = field(path);
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/**
 * Where an issue of the server's answer is, in words: its `field` is the machine path for API
 * clients ("file.bodies.0.massKg"); the screen names the place as the problem list does
 * ("Disc 1, mass (massKg)"). "file" alone is the whole file; "name" the snapshot's name.
 */
export function issuePlace(field: string): string {
  if (field === "file") return "File";
  if (field === "name") return "Snapshot name";
  return problemPlace(field.startsWith("file.") ? field.slice("file.".length) : field);
}
