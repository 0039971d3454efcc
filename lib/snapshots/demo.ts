/**
 * The demo snapshot: one moment of the loading bay in "Crateslide", the invented game of the
 * invented demo studio Gannet Yard Games, seen from above (no gravity): 24 crates stacked in a
 * block, 10 barrels rolling in from the ramp, one crate shoved by a forklift, 6 coins skittering,
 * inside the bay's four walls (12 m × 8 m). examples/snapshots/crateslide-loading-bay.json holds
 * exactly these bytes (a test keeps them in step).
 *
 * Pure data: safe to import in the browser.
 */
import type { SnapshotBody, SnapshotWall } from "../physics/types";

export const CRATESLIDE_SNAPSHOT_NAME = "Crateslide loading bay";

const mm = (value: number) => Math.round(value * 1000) / 1000;

function loadingBayBodies(): SnapshotBody[] {
  const bodies: SnapshotBody[] = [];
  for (let row = 0; row < 4; row++) for (let col = 0; col < 6; col++) bodies.push({ xM: mm(2 + col * 0.62), yM: mm(1.5 + row * 0.62), vxMPerS: 0, vyMPerS: 0, massKg: 25, radiusM: 0.3 });
  for (let k = 0; k < 10; k++) {
    bodies.push({ xM: mm(8 + (k % 5) * 0.7), yM: mm(5.5 + Math.floor(k / 5) * 0.8), vxMPerS: mm(-1.5 - 0.1 * (k % 3)), vyMPerS: mm(-0.8 + 0.15 * (k % 4)), massKg: 60, radiusM: 0.28 });
  }
  bodies.push({ xM: 9.5, yM: 2.2, vxMPerS: -4, vyMPerS: 0.3, massKg: 25, radiusM: 0.3 });
  for (let k = 0; k < 6; k++) bodies.push({ xM: mm(1 + k * 0.5), yM: 6.8, vxMPerS: 0.6, vyMPerS: -0.4, massKg: 3, radiusM: 0.12 });
  return bodies;
}

const LOADING_BAY_WALLS: SnapshotWall[] = [
  { normalX: 1, normalY: 0, offsetM: 0 },
  { normalX: -1, normalY: 0, offsetM: -12 },
  { normalX: 0, normalY: 1, offsetM: 0 },
  { normalX: 0, normalY: -1, offsetM: -8 },
];

/** The file as the game would export it (pretty-printed JSON, trailing newline). */
export const CRATESLIDE_SNAPSHOT_JSON = `${JSON.stringify({ version: 1, name: CRATESLIDE_SNAPSHOT_NAME, gravityMPerS2: 0, bodies: loadingBayBodies(), walls: LOADING_BAY_WALLS }, null, 2)}\n`;
