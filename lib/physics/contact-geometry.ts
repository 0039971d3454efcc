/**
 * The geometry of one disc pair's step shared by the contact field's general pair (`pair`), its
 * linear rows (`linearPairRows`) and the two-body loop (`advancePair`): the contact normal and the
 * two tunnel tests. Small functions of numbers so that the compiler inlines them into each hot
 * loop, which then does the same operations in the same order as when they were written out there
 * (tests/unit/physics/kernel-identity.test.ts, fast-path.test.ts hold every result to the bit).
 */

/**
 * One component of the unit normal from body i to body j: the centre offset `component` over the
 * centre distance; for coincident centres (distance not > 0) the last direction of approach, from
 * the offset at the start of the step, or the x axis (`fallback` 1 for x, 0 for y) when that is
 * zero too.
 */
export function contactNormal(component: number, distance: number, previousComponent: number, previousDistanceSquared: number, fallback: number): number {
  if (distance > 0) return component / distance;
  const previousDistance = Math.sqrt(previousDistanceSquared);
  return previousDistance > 0 ? previousComponent / previousDistance : fallback;
}

/**
 * A skipped contact: neither end of the step overlaps (the offset (previousDx, previousDy) at the
 * start, (dx, dy) at the end), but the straight line between them comes closer than the sum of
 * radii by more than `nearMissDepthFraction` of the smaller radius. The tolerance keeps near misses
 * out: in a resting pile neighbours sit nanometres apart, and the chord between two step ends of a
 * curved (accelerated) path dips below the true path by up to |Δv|·h/8, so a straight line that
 * grazes contact by that much is no body passing another. A body that does pass through another
 * misses by (1 − f) of the sum of radii (f the impact offset), so only passes within 1/1000 of a
 * radius of grazing are no longer called tunnels.
 */
export function skippedContact(dx: number, dy: number, previousDx: number, previousDy: number, contactDistanceSquared: number, nearMissDepthFraction: number, smallerRadius: number): boolean {
  if (previousDx * previousDx + previousDy * previousDy < contactDistanceSquared) return false; // contact ended this step
  const stepX = dx - previousDx;
  const stepY = dy - previousDy;
  const stepSquared = stepX * stepX + stepY * stepY;
  if (stepSquared === 0) return false;
  const along = -(previousDx * stepX + previousDy * stepY) / stepSquared;
  if (along <= 0 || along >= 1) return false;
  const closestX = previousDx + along * stepX;
  const closestY = previousDy + along * stepY;
  const depthLimit = Math.sqrt(contactDistanceSquared) - nearMissDepthFraction * smallerRadius;
  return closestX * closestX + closestY * closestY < depthLimit * depthLimit;
}

/**
 * Whether the step from offset (startX, startY) by (stepX, stepY) passed closer than the sum of
 * radii less `nearMissDepthFraction` of the smaller radius (a contact entered while already
 * receding jumped past its approach unless that approach only grazed contact; see `skippedContact`).
 */
export function passedDeeperThanTolerance(contactDistance: number, nearMissDepthFraction: number, smallerRadius: number, startX: number, startY: number, stepX: number, stepY: number): boolean {
  const stepSquared = stepX * stepX + stepY * stepY;
  let along = stepSquared > 0 ? -(startX * stepX + startY * stepY) / stepSquared : 0;
  if (along < 0) along = 0;
  else if (along > 1) along = 1;
  const closestX = startX + along * stepX;
  const closestY = startY + along * stepY;
  const depthLimit = contactDistance - nearMissDepthFraction * smallerRadius;
  return closestX * closestX + closestY * closestY < depthLimit * depthLimit;
}
