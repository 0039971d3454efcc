/**
 * The done cells the sweep page holds while a sweep runs, kept up to date by asking the cells
 * route only for what changed: `GET …/cells?after=<cursor>` answers the cells of the results rows
 * written after that cursor and the new cursor. A chunk whose cached cells were stored at submit
 * (a partial row) comes again, whole, once it has run: cells are merged by index, the newer
 * answer winning, so none is held twice. Pure functions, no React: the page's hook and the tests
 * use the same merge.
 */
import type { Metrics, Verdict } from "@/lib/physics/types";

/** One done cell as the cells route answers it. */
export interface CellRow {
  index: number;
  axisValues: (number | string)[];
  metrics: Metrics;
  verdict: Verdict;
  reason: string | null;
}

/** What the page holds: done cells in index order, and the cursor of the answer they came with. */
export interface HeldCells {
  cells: readonly CellRow[];
  cursor: string;
}

/** One answer of `GET …/cells?after=…`. */
export interface CellsPage {
  cells: readonly CellRow[];
  cursor: string;
}

/** The first cursor: nothing held yet, so every stored row is newer (the database's cursors start at 1). */
export const FIRST_CURSOR = "0";

function inIndexOrder(cells: readonly CellRow[]): readonly CellRow[] {
  for (let i = 1; i < cells.length; i++) {
    if (cells[i].index <= cells[i - 1].index) {
      // Sorted, and of the same index the later one kept (a stable sort keeps their order).
      const sorted = [...cells].sort((a, b) => a.index - b.index);
      return sorted.filter((cell, j) => j === sorted.length - 1 || sorted[j + 1].index !== cell.index);
    }
  }
  return cells;
}

/** `held` and `incoming` merged by index, in index order; a cell in both is taken from `incoming`. */
export function mergeCells(held: readonly CellRow[], incoming: readonly CellRow[]): readonly CellRow[] {
  const fresh = inIndexOrder(incoming);
  if (fresh.length === 0) return held;
  if (held.length === 0) return fresh;
  const out: CellRow[] = [];
  let i = 0;
  let j = 0;
  while (i < held.length || j < fresh.length) {
    if (j >= fresh.length || (i < held.length && held[i].index < fresh[j].index)) out.push(held[i++]);
    else {
      if (i < held.length && held[i].index === fresh[j].index) i++;
      out.push(fresh[j++]);
    }
  }
  return out;
}

/**
 * What the page holds after an answer: the same object when the answer brought nothing (no
 * re-render of the maps), else the merge with the answer's cursor.
 */
export function withPage(held: HeldCells | undefined, page: CellsPage): HeldCells {
  if (!held) return { cells: inIndexOrder(page.cells), cursor: page.cursor };
  if (page.cells.length === 0 && page.cursor === held.cursor) return held;
  return { cells: mergeCells(held.cells, page.cells), cursor: page.cursor };
}
