/**
 * Broad phase of the contact field: which pairs a force pass looks at. Pairs come as rows, row i
 * holding body i's partners j > i in ascending order at partners[rowStart[i] .. rowEnd[i]], so every
 * broad phase hands the force pass the same canonical (i, j) order and the results are
 * byte-identical whichever one found the pairs:
 *  - all pairs: row i is every j > i (identity rows, O(N) memory);
 *  - a neighbour list built on a uniform grid: the pairs within the cutoff plus a skin, kept while
 *    no body has drifted far enough for an unlisted pair to come within the cutoff, with a wall
 *    band (the bodies that can reach a wall while the list is valid);
 *  - the uniform grid itself, every step, for a state the list cannot take (non-finite reach).
 * The grid is a counting sort of the bodies into cells at least one reach wide; all buffers are
 * allocated once and grown when needed.
 */
import type { Bodies } from "./bodies";

/**
 * Skin of the neighbour list, as a fraction of the largest radius: the list holds every pair
 * within the step's cutoff plus this margin, and is rebuilt once some body has drifted half of
 * it (our choice: a settled pile keeps one list for hundreds of steps, a gas rebuilds every few).
 */
export const NEIGHBOUR_LIST_SKIN_FRACTION = 0.25;
/** Relative slack on the list's reach, far above the rounding of the distances compared with it. */
const NEIGHBOUR_LIST_SLACK = 1e-9;
/** Relative slack of the wall band's clearance test, far above the rounding of a distance to a wall. */
const WALL_BAND_SLACK = 1e-9;

const EMPTY_INDICES = new Int32Array(0);
const EMPTY_POSITIONS = new Float64Array(0);

export class BroadPhase {
  // Uniform grid (counting sort by cell): the layout of the last sort.
  private cellOfBody: Int32Array = EMPTY_INDICES;
  private cellStart: Int32Array = EMPTY_INDICES;
  private bodiesByCell: Int32Array = EMPTY_INDICES;
  private cellsX = 0;
  private cellsY = 0;
  /** Partners of one body found in the grid, ascending (see gatherCandidates). */
  candidates: Int32Array = EMPTY_INDICES;

  // Neighbour list (rows: listPartners[listStart[i] .. listEnd[i]]), the positions it was built at and its reach.
  listStart: Int32Array = EMPTY_INDICES;
  listEnd: Int32Array = EMPTY_INDICES;
  listPartners: Int32Array = EMPTY_INDICES;
  listX: Float64Array = EMPTY_POSITIONS;
  listY: Float64Array = EMPTY_POSITIONS;
  /** Pairs closer than this (m) at the build are listed; ≤ 0: no valid list. */
  private listReachM = 0;
  private listBodies: Bodies | null = null;
  /**
   * Wall band of the neighbour list: the bodies (ascending) that were within twice the list's
   * drift allowance of a wall at the build. While the list is valid no other body can reach a wall,
   * so the wall pass skips them: for them it would find no overlap and do nothing.
   */
  wallBand: Int32Array = EMPTY_INDICES;
  wallBandCount = 0;
  /** Set by each pass: the list was valid for this state and every position is finite. */
  wallBandUsable = false;

  // Every pair as rows: row i is allPairsPartners[i + 1 .. count − 1] of the identity.
  allPairsStart: Int32Array = EMPTY_INDICES;
  allPairsEnd: Int32Array = EMPTY_INDICES;
  allPairsPartners: Int32Array = EMPTY_INDICES;
  private allPairsCount = -1;

  /** Forgets the neighbour list (a new run, or a state it cannot take). */
  invalidateList(): void {
    this.listReachM = 0;
    this.listBodies = null;
  }

  /** Whether there is a list for these bodies to check the drift against. */
  hasListFor(bodies: Bodies): boolean {
    return this.listReachM > 0 && this.listBodies === bodies && this.listX.length >= bodies.count;
  }

  /**
   * Whether the list still holds every pair within `cutoffM`: a pair now closer than the cutoff was
   * closer than cutoff + 2·drift at the build (`driftSquared` the largest squared drift since).
   */
  listHolds(cutoffM: number, driftSquared: number): boolean {
    return cutoffM + 2 * Math.sqrt(driftSquared) <= this.listReachM * (1 - NEIGHBOUR_LIST_SLACK);
  }

  /** The all-pairs rows for `count` bodies (kept while the count stays). */
  fillAllPairRows(count: number): void {
    if (this.allPairsCount === count) return;
    if (this.allPairsStart.length < count) {
      this.allPairsStart = new Int32Array(count);
      this.allPairsEnd = new Int32Array(count);
      this.allPairsPartners = new Int32Array(count);
    }
    const { allPairsStart, allPairsEnd, allPairsPartners } = this;
    for (let i = 0; i < count; i++) {
      allPairsStart[i] = i + 1;
      allPairsEnd[i] = count;
      allPairsPartners[i] = i;
    }
    this.allPairsCount = count;
  }

  /**
   * Sorts the bodies into cells at least `cellSizeM` wide over the box from (minX, minY) spanning
   * (spanX, spanY), widened until there are no more cells than a few per body. Stable placement
   * keeps each cell's bodies in ascending index order.
   */
  private layOutGrid(bodies: Bodies, minX: number, minY: number, spanX: number, spanY: number, cellSizeM: number): void {
    const { count, x, y } = bodies;
    const maxCells = 4 * count + 16;
    let sizeM = Math.max(cellSizeM, 1e-300);
    while ((Math.floor(spanX / sizeM) + 1) * (Math.floor(spanY / sizeM) + 1) > maxCells) sizeM *= 1.5;
    const cellsX = Math.floor(spanX / sizeM) + 1;
    const cellsY = Math.floor(spanY / sizeM) + 1;
    const cellCount = cellsX * cellsY;
    if (this.cellOfBody.length < count) {
      this.cellOfBody = new Int32Array(count);
      this.bodiesByCell = new Int32Array(count);
      this.candidates = new Int32Array(count);
    }
    if (this.cellStart.length < cellCount + 1) this.cellStart = new Int32Array(cellCount + 1);
    const { cellOfBody, cellStart, bodiesByCell } = this;
    cellStart.fill(0, 0, cellCount + 1);
    for (let i = 0; i < count; i++) {
      const cx = Math.min(cellsX - 1, Math.floor((x[i] - minX) / sizeM));
      const cy = Math.min(cellsY - 1, Math.floor((y[i] - minY) / sizeM));
      const cell = cy * cellsX + cx;
      cellOfBody[i] = cell;
      cellStart[cell + 1]++;
    }
    for (let c = 0; c < cellCount; c++) cellStart[c + 1] += cellStart[c];
    for (let i = 0; i < count; i++) bodiesByCell[cellStart[cellOfBody[i]]++] = i;
    for (let c = cellCount; c > 0; c--) cellStart[c] = cellStart[c - 1];
    cellStart[0] = 0;
    this.cellsX = cellsX;
    this.cellsY = cellsY;
  }

  /**
   * `layOutGrid` over the box around the bodies' centres. False, with no layout, when that box is
   * not finite, or, with `everyCentreFinite`, when a centre is not finite (a NaN centre does not
   * widen the box: without the flag it is laid out as before, where the run is exploding anyway).
   */
  layOutGridOverBodies(bodies: Bodies, cellSizeM: number, everyCentreFinite: boolean): boolean {
    const { count, x, y } = bodies;
    let minX = Infinity;
    let minY = Infinity;
    let maxX = -Infinity;
    let maxY = -Infinity;
    for (let i = 0; i < count; i++) {
      const xi = x[i];
      const yi = y[i];
      if (everyCentreFinite && !(xi - xi === 0 && yi - yi === 0)) return false;
      if (xi < minX) minX = xi;
      if (xi > maxX) maxX = xi;
      if (yi < minY) minY = yi;
      if (yi > maxY) maxY = yi;
    }
    if (!(maxX - minX < Infinity && maxY - minY < Infinity)) return false;
    this.layOutGrid(bodies, minX, minY, maxX - minX, maxY - minY, cellSizeM);
    return true;
  }

  /**
   * Body i's partners j > i in its own and the eight neighbouring cells of the last layout, into
   * `candidates` in ascending order (insertion: the lists are short); with `reachSquared`, only
   * those closer than its root. Returns how many.
   */
  gatherCandidates(bodies: Bodies, i: number, filtered: boolean, reachSquared: number): number {
    const { x, y } = bodies;
    const { cellOfBody, cellStart, bodiesByCell, candidates, cellsX, cellsY } = this;
    const cell = cellOfBody[i];
    const cx = cell % cellsX;
    const cy = (cell - cx) / cellsX;
    let candidateCount = 0;
    const yLow = cy > 0 ? cy - 1 : 0;
    const yHigh = cy < cellsY - 1 ? cy + 1 : cy;
    const xLow = cx > 0 ? cx - 1 : 0;
    const xHigh = cx < cellsX - 1 ? cx + 1 : cx;
    const xi = x[i];
    const yi = y[i];
    for (let ny = yLow; ny <= yHigh; ny++) {
      for (let nx = xLow; nx <= xHigh; nx++) {
        const neighbour = ny * cellsX + nx;
        const end = cellStart[neighbour + 1];
        for (let slot = cellStart[neighbour]; slot < end; slot++) {
          const j = bodiesByCell[slot];
          if (j <= i) continue;
          if (filtered) {
            const dx = x[j] - xi;
            const dy = y[j] - yi;
            if (dx * dx + dy * dy >= reachSquared) continue;
          }
          let position = candidateCount++;
          while (position > 0 && candidates[position - 1] > j) {
            candidates[position] = candidates[position - 1];
            position--;
          }
          candidates[position] = j;
        }
      }
    }
    return candidateCount;
  }

  /**
   * Lists every pair closer than `reachM`, in (i, j) order, and the wall band for these walls;
   * false (no list) when a position or the reach is not finite.
   */
  buildNeighbourList(bodies: Bodies, reachM: number, maxRadius: number, wallNormalX: readonly number[], wallNormalY: readonly number[], wallOffset: readonly number[]): boolean {
    if (!(reachM < Infinity) || !this.layOutGridOverBodies(bodies, reachM, true)) return false;
    const { count, x, y } = bodies;
    if (this.listStart.length < count + 1) {
      this.listStart = new Int32Array(count + 1);
      this.listEnd = new Int32Array(count);
      this.listX = new Float64Array(count);
      this.listY = new Float64Array(count);
    }
    if (this.listPartners.length < 8 * count) this.listPartners = new Int32Array(8 * count);
    const { listStart, listEnd, listX, listY } = this;
    listX.set(x.subarray(0, count));
    listY.set(y.subarray(0, count));
    const reachSquared = reachM * reachM;
    let listed = 0;
    for (let i = 0; i < count; i++) {
      listStart[i] = listed;
      const candidateCount = this.gatherCandidates(bodies, i, true, reachSquared);
      if (listed + candidateCount > this.listPartners.length) {
        // Rare (a list longer than 8 partners per body): grow once, keeping what is listed.
        const grown = new Int32Array(Math.max(2 * this.listPartners.length, listed + candidateCount));
        grown.set(this.listPartners.subarray(0, listed));
        this.listPartners = grown;
      }
      const { listPartners, candidates } = this;
      for (let c = 0; c < candidateCount; c++) listPartners[listed++] = candidates[c];
      listEnd[i] = listed;
    }
    listStart[count] = listed;
    this.listReachM = reachM;
    this.listBodies = bodies;
    this.buildWallBand(bodies, reachM - 2 * maxRadius, wallNormalX, wallNormalY, wallOffset);
    return true;
  }

  /**
   * The wall band for a list of reach 2·r_max + `allowanceM`: while the list is valid every body
   * stays within allowanceM / 2 of where it was at the build (cutoff ≥ 2·r_max, and
   * cutoff + 2·drift ≤ reach), so a body whose surface cleared every wall by more than allowanceM
   * cannot touch one. The comparison keeps a relative margin far above the rounding of the
   * distance to a wall (and takes a body in whenever it is not sure, NaN included).
   */
  private buildWallBand(bodies: Bodies, allowanceM: number, wallNormalX: readonly number[], wallNormalY: readonly number[], wallOffset: readonly number[]): void {
    const { count, x, y, radius } = bodies;
    const wallCount = wallOffset.length;
    if (this.wallBand.length < count) this.wallBand = new Int32Array(count);
    const wallBand = this.wallBand;
    let banded = 0;
    for (let i = 0; i < count; i++) {
      for (let w = 0; w < wallCount; w++) {
        const alongX = wallNormalX[w] * x[i];
        const alongY = wallNormalY[w] * y[i];
        const offset = wallOffset[w];
        const clearance = alongX + alongY - offset - radius[i];
        const margin = allowanceM + WALL_BAND_SLACK * (Math.abs(alongX) + Math.abs(alongY) + Math.abs(offset) + radius[i]);
        if (!(clearance > margin)) {
          wallBand[banded++] = i;
          break;
        }
      }
    }
    this.wallBandCount = banded;
  }
}
