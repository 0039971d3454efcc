/**
 * The sweep page's merge of incremental cells answers (components/sweeps/sweep-cells.ts): by
 * index, in index order, the newer answer winning, and the held object kept when nothing changed
 * (so the maps do not redraw every second for nothing).
 */
import { describe, expect, it } from "vitest";
import type { CellRow } from "@/components/sweeps/sweep-api";
import { mergeCells, withPage } from "@/components/sweeps/sweep-cells";

function cell(index: number, verdict: CellRow["verdict"] = "stable", reason: string | null = null): CellRow {
  return { index, axisValues: [index], metrics: {} as CellRow["metrics"], verdict, reason };
}

const indices = (cells: readonly CellRow[]) => cells.map((c) => c.index);

describe("mergeCells", () => {
  it("interleaves by index and takes a cell present in both from the newer answer", () => {
    const held = [cell(0), cell(2, "stable", "cached"), cell(5)];
    const merged = mergeCells(held, [cell(1), cell(2, "stable", "ran"), cell(3), cell(7)]);
    expect(indices(merged)).toEqual([0, 1, 2, 3, 5, 7]);
    expect(merged[2].reason).toBe("ran");
  });

  it("sorts an answer out of index order, and of one index twice in it keeps the later", () => {
    const merged = mergeCells([cell(4)], [cell(9), cell(1), cell(1, "exploded"), cell(4, "deep-overlap")]);
    expect(indices(merged)).toEqual([1, 4, 9]);
    expect(merged.map((c) => c.verdict)).toEqual(["exploded", "deep-overlap", "stable"]);
  });

  it("keeps the held array itself when the answer is empty", () => {
    const held = [cell(0)];
    expect(mergeCells(held, [])).toBe(held);
  });
});

describe("withPage", () => {
  it("starts from the first answer, then merges each later one with its cursor", () => {
    const first = withPage(undefined, { cells: [cell(2), cell(0)], cursor: "3" });
    expect([indices(first.cells), first.cursor]).toEqual([[0, 2], "3"]);
    const next = withPage(first, { cells: [cell(0, "tunneled"), cell(1)], cursor: "8" });
    expect([indices(next.cells), next.cursor, next.cells[0].verdict]).toEqual([[0, 1, 2], "8", "tunneled"]);
  });

  it("returns the held object when an answer brings no cell and the same cursor", () => {
    const held = withPage(undefined, { cells: [cell(0)], cursor: "5" });
    expect(withPage(held, { cells: [], cursor: "5" })).toBe(held);
    const moved = withPage(held, { cells: [], cursor: "6" });
    expect(moved).not.toBe(held);
    expect(moved.cells).toBe(held.cells);
    expect(moved.cursor).toBe("6");
  });
});
