/** The one table component: what every list of the app relies on it to draw. */
import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { DataTable, toggled, type Column, type DataTableProps } from "@/components/data-table";

type Row = { id: number; name: string; ms: number };
const ROWS: Row[] = [
  { id: 1, name: "Rink puck", ms: 1500 },
  { id: 2, name: "Crate stack", ms: 60_000 },
];
const COLUMNS: Column<Row>[] = [
  { key: "name", header: "Name", cell: (r) => r.name },
  { key: "ms", header: "Billed (ms)", align: "right", numeric: true, cell: (r) => r.ms.toLocaleString("en"), cellTestId: "billed-ms" },
];

const html = (props: Partial<DataTableProps<Row>>) =>
  renderToStaticMarkup(createElement(DataTable<Row>, { columns: COLUMNS, rows: ROWS, rowKey: (r: Row) => r.id, ...props }));

describe("DataTable", () => {
  it("draws one column header per column, scoped to its column, and one row per item in order", () => {
    const out = html({ testId: "usage" });
    expect(out).toContain('data-testid="usage"');
    expect(out.match(/<th scope="col"/g)).toHaveLength(2);
    expect(out.match(/<tr/g)).toHaveLength(3);
    expect(out.indexOf("Rink puck")).toBeLessThan(out.indexOf("Crate stack"));
    // A figure column lines up on the right with digits of equal width, header and cells alike.
    expect(out).toMatch(/<th scope="col" class="[^"]*text-right[^"]*">Billed \(ms\)<\/th>/);
    expect(out).toMatch(/<td class="[^"]*text-right tabular-nums" data-testid="billed-ms">60,000<\/td>/);
  });

  it("shows the empty state instead of a table when there are no rows, and an empty table when none is given", () => {
    const none = html({ rows: [], empty: "Nothing billed yet." });
    expect(none).not.toContain("<table");
    expect(none).toContain("Nothing billed yet.");
    expect(html({ rows: [] })).toContain("<table");
  });

  it("leaves out columns given as false, and reads an actions header to screen readers only", () => {
    const out = html({ columns: [...COLUMNS, false, { key: "act", header: "Actions", srOnly: true, cell: () => "x" }] });
    expect(out.match(/<th /g)).toHaveLength(3);
    expect(out).toContain('<span class="sr-only">Actions</span>');
  });

  it("draws a row-header column as a header cell scoped to its row, the other cells as data cells", () => {
    const out = html({ columns: [{ ...COLUMNS[0], rowHeader: true }, COLUMNS[1]] });
    // Two column headers plus one row header per row; the figures stay data cells.
    expect(out.match(/<th scope="col"/g)).toHaveLength(2);
    expect(out).toMatch(/<th scope="row" class="[^"]*">Rink puck<\/th>/);
    expect(out).toMatch(/<th scope="row" class="[^"]*">Crate stack<\/th>/);
    expect(out.match(/<td/g)).toHaveLength(2);
  });

  it("announces the sorted column and its direction, and marks the others as sortable but not sorted", () => {
    const sortable = (active: boolean): Column<Row> => ({ ...COLUMNS[1], sort: { active, order: "asc", onSort: () => {} } });
    const out = html({ columns: [{ ...COLUMNS[0], sort: { active: false, order: "desc", onSort: () => {} } }, sortable(true)] });
    expect(out).toContain('aria-sort="none"');
    expect(out).toContain('aria-sort="ascending"');
    expect(out).toContain("Billed (ms) ▲");
  });

  it("draws a row's detail under it, across every column, only while it is open", () => {
    const detail = { isOpen: (r: Row) => r.id === 2, id: (r: Row) => `detail-${r.id}`, render: (r: Row) => `chunks of ${r.name}` };
    const out = html({ detail, rowProps: (r) => ({ testId: `row-${r.id}`, data: { "data-kind": "usage" } }) });
    expect(out).toContain('<tr id="detail-2"><td colSpan="2"');
    expect(out).toContain("chunks of Crate stack");
    expect(out).not.toContain("chunks of Rink puck");
    expect(out).toContain('data-testid="row-1" data-kind="usage"');
    // The detail follows its own row, before the next one.
    expect(out.indexOf('data-testid="row-2"')).toBeLessThan(out.indexOf('id="detail-2"'));
  });
});

describe("opening row details", () => {
  it("opens and closes a row; with single, opening one closes the other", () => {
    expect(toggled([], 3, false)).toEqual([3]);
    expect(toggled([3], 4, false)).toEqual([3, 4]);
    expect(toggled([3, 4], 3, false)).toEqual([4]);
    expect(toggled([3], 4, true)).toEqual([4]);
    expect(toggled([4], 4, true)).toEqual([]);
  });
});
