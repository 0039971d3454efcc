/**
 * Initial states of the five scenes. Coordinates are chosen so the first contact happens near the
 * origin (keeps rounding small), and initial layouts never overlap: where rounding could create a
 * overlap of one ulp between touching bodies, the layout is nudged apart.
 */
import type { BoxScene, PairScene, RowScene, Scene, SlopeScene, SnapshotScene, StackScene, WallScene } from "./types";
import { reusableBodies, setBody, setInertia, setSpin, type Bodies } from "./bodies";
import type { Wall } from "./contact-field";
import { Xoshiro128StarStar } from "./random";
import { MAX_BOX_DISCS, MAX_STACK_DISCS, SNAPSHOT_OVERLAP_TOLERANCE, STACK_CHANNEL_CLEARANCE_FRACTION } from "./constants";

export interface SceneSetup {
  bodies: Bodies;
  walls: Wall[];
  gravityMPerS2: number;
}

export function buildScene(scene: Scene, seed: number): SceneSetup {
  switch (scene.kind) {
    case "pair":
      return buildPair(scene);
    case "wall":
      return buildWall(scene);
    case "row":
      return buildRow(scene);
    case "box":
      return buildBox(scene, seed);
    case "snapshot":
      return buildSnapshot(scene);
    case "slope":
      return buildSlope(scene);
    case "stack":
      return buildStack(scene, seed);
  }
}

/** Unit normal (into free space) and downhill direction of the slope scene's incline. */
export function slopeGeometry(angleDeg: number): { normalX: number; normalY: number; downX: number; downY: number } {
  const angleRad = (angleDeg * Math.PI) / 180;
  const sin = Math.sin(angleRad);
  const cos = Math.cos(angleRad);
  return { normalX: -sin, normalY: cos, downX: -cos, downY: -sin };
}

/** The body touches the incline at the origin (overlap 0), moving down it at `speedMPerS`. */
function buildSlope(scene: SlopeScene): SceneSetup {
  const bodies = reusableBodies(1);
  const { normalX, normalY, downX, downY } = slopeGeometry(scene.angleDeg);
  const r = scene.radiusM;
  setBody(bodies, 0, r * normalX, r * normalY, scene.speedMPerS * downX, scene.speedMPerS * downY, scene.massKg, r);
  if (scene.body === "crate") setInertia(bodies, 0, Infinity);
  else setSpin(bodies, 0, scene.spinRadPerS);
  return { bodies, walls: [{ normalX, normalY, offsetM: 0 }], gravityMPerS2: scene.gravityMPerS2 };
}

/** Why a stack scene cannot be built, or null (for input validation upstream). */
export function stackSceneProblem(scene: Pick<StackScene, "count" | "perturbationFraction">): string | null {
  if (!(Number.isInteger(scene.count) && scene.count >= 1 && scene.count <= MAX_STACK_DISCS)) return `count must be an integer from 1 to ${MAX_STACK_DISCS}`;
  if (!(scene.perturbationFraction >= 0 && scene.perturbationFraction <= 0.5)) return "perturbationFraction must be from 0 to 0.5";
  return null;
}

/**
 * Disc k (0 at the bottom) centred 2r·k above the bottom disc, which touches the floor y = 0,
 * shifted sideways by a seeded amount in ±perturbation·r; the channel walls stand
 * r·(1 + perturbation + STACK_CHANNEL_CLEARANCE_FRACTION) either side of x = 0.
 */
function buildStack(scene: StackScene, seed: number): SceneSetup {
  const problem = stackSceneProblem(scene);
  if (problem !== null) throw new RangeError(`stack scene: ${problem}`);
  const random = new Xoshiro128StarStar(seed);
  const bodies = reusableBodies(scene.count);
  const r = scene.radiusM;
  const shift = scene.perturbationFraction * r;
  for (let k = 0; k < scene.count; k++) {
    setBody(bodies, k, shift * (2 * random.nextFloat() - 1), r + 2 * r * k, 0, 0, scene.massKg, r);
  }
  const halfWidth = r * (1 + scene.perturbationFraction + STACK_CHANNEL_CLEARANCE_FRACTION);
  const walls: Wall[] = [
    { normalX: 0, normalY: 1, offsetM: 0 },
    { normalX: 1, normalY: 0, offsetM: -halfWidth },
    { normalX: -1, normalY: 0, offsetM: -halfWidth },
  ];
  return { bodies, walls, gravityMPerS2: scene.gravityMPerS2 };
}

/** A (index 0) below and left of B (index 1, at the origin), moving along +x; B moves along −x. */
function buildPair(scene: PairScene): SceneSetup {
  const bodies = reusableBodies(2);
  const contactDistance = scene.radiusAM + scene.radiusBM;
  const offsetM = scene.offsetFraction * contactDistance;
  let separationXM = Math.sqrt(contactDistance * contactDistance - offsetM * offsetM) + scene.gapM;
  while (separationXM * separationXM + offsetM * offsetM < contactDistance * contactDistance) {
    separationXM += Number.EPSILON * contactDistance;
  }
  setBody(bodies, 0, -separationXM, -offsetM, scene.speedAMPerS, 0, scene.massAKg, scene.radiusAM);
  setBody(bodies, 1, 0, 0, -scene.speedBMPerS, 0, scene.massBKg, scene.radiusBM);
  setSpin(bodies, 0, scene.spinARadPerS ?? 0);
  setSpin(bodies, 1, scene.spinBRadPerS ?? 0);
  return { bodies, walls: [], gravityMPerS2: 0 };
}

/** The wall is the line x = 0; the disc starts at x = r + gap moving at `angleDeg` from the normal. */
function buildWall(scene: WallScene): SceneSetup {
  const bodies = reusableBodies(1);
  const angleRad = (scene.angleDeg * Math.PI) / 180;
  const speed = scene.speedMPerS;
  setBody(bodies, 0, scene.radiusM + scene.gapM, 0, -speed * Math.cos(angleRad), speed * Math.sin(angleRad), scene.massKg, scene.radiusM);
  setSpin(bodies, 0, scene.spinRadPerS ?? 0);
  return { bodies, walls: [{ normalX: 1, normalY: 0, offsetM: 0 }], gravityMPerS2: 0 };
}

/** Striker (index 0) at x = 0 moving along +x, then `count` resting discs (indices 1…count). */
function buildRow(scene: RowScene): SceneSetup {
  const bodies = reusableBodies(scene.count + 1);
  const diameter = 2 * scene.radiusM;
  setBody(bodies, 0, 0, 0, scene.strikerSpeedMPerS, 0, scene.strikerMassKg, scene.radiusM);
  let previousXM = 0;
  for (let k = 1; k <= scene.count; k++) {
    const surfaceGapM = k === 1 ? scene.gapM : scene.spacingM;
    let positionM = previousXM + diameter + surfaceGapM;
    while (positionM - previousXM < diameter) positionM += Number.EPSILON * Math.max(1, Math.abs(positionM));
    setBody(bodies, k, positionM, 0, 0, 0, scene.massKg, scene.radiusM);
    previousXM = positionM;
  }
  return { bodies, walls: [], gravityMPerS2: 0 };
}

/** Cells per axis for the box layout: one disc per cell, each cell wider than a diameter. */
export interface BoxLayout {
  cellsX: number;
  cellsY: number;
}

/**
 * Chooses the grid of cells that leaves the most room per disc; null if `count` discs do not fit
 * one per cell (the layout needs cells wider than a diameter so discs never start overlapping).
 */
export function boxLayout(scene: Pick<BoxScene, "count" | "radiusM" | "widthM" | "heightM">): BoxLayout | null {
  const { count, radiusM, widthM, heightM } = scene;
  if (!(count >= 1 && count <= MAX_BOX_DISCS)) return null;
  const diameter = 2 * radiusM;
  let best: BoxLayout | null = null;
  let bestCellSide = 0;
  for (let cellsX = 1; cellsX <= count; cellsX++) {
    const cellsY = Math.ceil(count / cellsX);
    const cellSide = Math.min(widthM / cellsX, heightM / cellsY);
    if (cellSide > bestCellSide) {
      bestCellSide = cellSide;
      best = { cellsX, cellsY };
    }
  }
  return bestCellSide > diameter ? best : null;
}

/** Why a box scene cannot be laid out, or null if it can (for input validation upstream). */
export function boxSceneProblem(scene: Pick<BoxScene, "count" | "radiusM" | "widthM" | "heightM">): string | null {
  if (!(Number.isInteger(scene.count) && scene.count >= 1 && scene.count <= MAX_BOX_DISCS)) {
    return `count must be an integer from 1 to ${MAX_BOX_DISCS}`;
  }
  if (boxLayout(scene) === null) {
    return `${scene.count} discs of radius ${scene.radiusM} m do not fit without overlap in a ${scene.widthM} m × ${scene.heightM} m box (one disc per cell wider than a diameter)`;
  }
  return null;
}

/**
 * Discs placed one per cell of a grid chosen by `boxLayout`, in cells picked by a seeded shuffle,
 * each at a seeded position inside its cell (so no two start overlapping), with speeds uniform in
 * [0, maxSpeed] and directions uniform on the circle (rejection sampling: no trigonometry, so the
 * layout is bit-identical on every platform).
 */
function buildBox(scene: BoxScene, seed: number): SceneSetup {
  const layout = boxLayout(scene);
  if (layout === null) throw new RangeError(boxSceneProblem(scene) ?? "box scene cannot be laid out");
  const random = new Xoshiro128StarStar(seed);
  const { cellsX, cellsY } = layout;
  const cellWidth = scene.widthM / cellsX;
  const cellHeight = scene.heightM / cellsY;
  const cellCount = cellsX * cellsY;
  const cells = new Int32Array(cellCount);
  for (let c = 0; c < cellCount; c++) cells[c] = c;
  const bodies = reusableBodies(scene.count);
  const r = scene.radiusM;
  for (let i = 0; i < scene.count; i++) {
    const pick = i + random.nextBelow(cellCount - i);
    const cell = cells[pick];
    cells[pick] = cells[i];
    cells[i] = cell;
    const column = cell % cellsX;
    const row = (cell - column) / cellsX;
    const x = column * cellWidth + r + random.nextFloat() * (cellWidth - 2 * r);
    const y = row * cellHeight + r + random.nextFloat() * (cellHeight - 2 * r);
    const speed = random.nextFloat() * scene.maxSpeedMPerS;
    let directionX = 0;
    let directionY = 0;
    let lengthSquared = 0;
    do {
      directionX = 2 * random.nextFloat() - 1;
      directionY = 2 * random.nextFloat() - 1;
      lengthSquared = directionX * directionX + directionY * directionY;
    } while (lengthSquared > 1 || lengthSquared < 1e-12);
    const scale = speed / Math.sqrt(lengthSquared);
    setBody(bodies, i, x, y, directionX * scale, directionY * scale, scene.massKg, r);
  }
  const walls: Wall[] = [
    { normalX: 1, normalY: 0, offsetM: 0 },
    { normalX: -1, normalY: 0, offsetM: -scene.widthM },
    { normalX: 0, normalY: 1, offsetM: 0 },
    { normalX: 0, normalY: -1, offsetM: -scene.heightM },
  ];
  return { bodies, walls, gravityMPerS2: scene.gravityMPerS2 };
}

/** A snapshot wall with a unit normal (offset divided by the normal's length). */
export function normalisedWall(wall: { normalX: number; normalY: number; offsetM: number }): Wall {
  const length = Math.hypot(wall.normalX, wall.normalY);
  return { normalX: wall.normalX / length, normalY: wall.normalY / length, offsetM: wall.offsetM / length };
}

/** An initial overlap of a snapshot beyond SNAPSHOT_OVERLAP_TOLERANCE. `wall` set: body `a` against that wall. */
export interface SnapshotOverlap {
  a: number;
  b?: number;
  wall?: number;
  /** Overlap depth over the smaller radius of the pair (the disc's radius against a wall). */
  fraction: number;
}

/**
 * Initial overlaps deeper than SNAPSHOT_OVERLAP_TOLERANCE, disc pairs in ascending (a, b) order,
 * then discs against walls; at most `limit`. Pairs are found by sweeping discs sorted by their
 * left edge, so a large snapshot costs about N log N plus the touching pairs.
 */
export function snapshotOverlaps(scene: Pick<SnapshotScene, "bodies" | "walls">, limit = 20): SnapshotOverlap[] {
  const { bodies } = scene;
  const count = bodies.length;
  const order = Array.from({ length: count }, (_, i) => i).sort((i, j) => bodies[i].xM - bodies[i].radiusM - (bodies[j].xM - bodies[j].radiusM) || i - j);
  const pairs: SnapshotOverlap[] = [];
  for (let p = 0; p < count; p++) {
    const i = order[p];
    const bi = bodies[i];
    const right = bi.xM + bi.radiusM;
    for (let q = p + 1; q < count; q++) {
      const j = order[q];
      const bj = bodies[j];
      if (bj.xM - bj.radiusM > right) break;
      const depth = bi.radiusM + bj.radiusM - Math.hypot(bj.xM - bi.xM, bj.yM - bi.yM);
      const fraction = depth / Math.min(bi.radiusM, bj.radiusM);
      if (fraction > SNAPSHOT_OVERLAP_TOLERANCE) pairs.push({ a: Math.min(i, j), b: Math.max(i, j), fraction });
    }
  }
  pairs.sort((u, v) => u.a - v.a || (u.b as number) - (v.b as number));
  const found = pairs.slice(0, limit);
  for (let w = 0; w < scene.walls.length && found.length < limit; w++) {
    const wall = normalisedWall(scene.walls[w]);
    for (let i = 0; i < count && found.length < limit; i++) {
      const body = bodies[i];
      const depth = body.radiusM - (wall.normalX * body.xM + wall.normalY * body.yM - wall.offsetM);
      const fraction = depth / body.radiusM;
      if (fraction > SNAPSHOT_OVERLAP_TOLERANCE) found.push({ a: i, wall: w, fraction });
    }
  }
  return found;
}

/** A sentence naming one initial overlap by disc (and wall) number, counted from 1. */
export function describeSnapshotOverlap(overlap: SnapshotOverlap): string {
  const percent = `${Number((overlap.fraction * 100).toPrecision(3))}%`;
  const limit = `${SNAPSHOT_OVERLAP_TOLERANCE * 100}%`;
  // Discs and walls counted from 1, as users count and as the upload page's drawing numbers them.
  return overlap.wall !== undefined
    ? `disc ${overlap.a + 1} starts ${percent} of its radius inside wall ${overlap.wall + 1} (tolerance ${limit})`
    : `discs ${overlap.a + 1} and ${(overlap.b ?? 0) + 1} start overlapping by ${percent} of the smaller radius (tolerance ${limit})`;
}

/** The discs as exported, every velocity times speedScale; the walls with unit normals. */
function buildSnapshot(scene: SnapshotScene): SceneSetup {
  const overlaps = snapshotOverlaps(scene, 1);
  if (overlaps.length > 0) throw new RangeError(`snapshot scene: ${describeSnapshotOverlap(overlaps[0])}`);
  const bodies = reusableBodies(scene.bodies.length);
  const scale = scene.speedScale;
  scene.bodies.forEach((body, i) => {
    setBody(bodies, i, body.xM, body.yM, body.vxMPerS * scale, body.vyMPerS * scale, body.massKg, body.radiusM);
    setSpin(bodies, i, (body.omegaRadPerS ?? 0) * scale);
  });
  return { bodies, walls: scene.walls.map(normalisedWall), gravityMPerS2: scene.gravityMPerS2 };
}
