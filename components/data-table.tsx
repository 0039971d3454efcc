"use client";

import { Fragment, useState, type ReactNode } from "react";
import { EmptyState, cx } from "@/components/ui";

/**
 * The one table of the app: typed columns over typed rows, with the header style, cell padding,
 * row dividers, the empty state, an optional sortable header, an optional detail row under a row and
 * an optional stacked layout on phones written once here.
 *
 * Sorting and paging stay with the caller: the ledger sorts and pages on the server, the admin lists
 * page in the browser (components/admin/pager.tsx); the table only draws what it is handed.
 */

/** Header cell style; the one place it is written. */
const HEAD = "px-3 py-2 text-xs font-semibold uppercase tracking-wider text-ink-muted";
/** Body cell padding. */
const CELL = "px-3 py-2.5";

type ClassOf<Row> = string | ((row: Row) => string | false | null | undefined);

export interface Column<Row> {
  /** React key of the column; unique within the table. */
  key: string;
  /** Header text (or node). With `srOnly`, read by screen readers only (an actions column). */
  header: ReactNode;
  srOnly?: boolean;
  /** What a row shows in this column. */
  cell: (row: Row) => ReactNode;
  /** "right" for figures compared down the column. Default "left". */
  align?: "left" | "right";
  /** Digits of equal width, so figures line up. */
  numeric?: boolean;
  /** More classes for this column's cells: fixed, or chosen per row (a danger tone). */
  className?: ClassOf<Row>;
  /** More classes for the header cell (a fixed width). */
  headerClassName?: string;
  /** data-testid of this column's cells. */
  cellTestId?: string;
  /** The cell names its row (a `<th scope="row">`), as the first column of a comparison does. */
  rowHeader?: boolean;
  /** A header that sorts: the caller keeps the order; the header shows it and announces it (aria-sort). */
  sort?: { active: boolean; order: "asc" | "desc"; onSort: () => void };
}

export interface RowDetail<Row> {
  /** Whether the row's detail is shown now (see useExpanded). */
  isOpen: (row: Row) => boolean;
  /** The detail row's id, for the toggle's aria-controls. */
  id: (row: Row) => string;
  render: (row: Row) => ReactNode;
  className?: string;
}

export interface DataTableProps<Row> {
  columns: readonly (Column<Row> | false | null | undefined)[];
  rows: readonly Row[];
  rowKey: (row: Row) => string | number;
  /** Shown instead of the table when there are no rows. Without it an empty table is drawn. */
  empty?: ReactNode;
  testId?: string;
  /** Accessible name of the table when no caption names it. */
  label?: string;
  caption?: ReactNode;
  /** "xs" for a table nested in another's detail row. */
  size?: "sm" | "xs";
  /** Column widths from the header (long text wraps instead of widening the table). */
  fixed?: boolean;
  className?: string;
  /** Wrap the table in a box that scrolls sideways on narrow screens. */
  scroll?: boolean;
  /** Below the sm breakpoint each row is a stacked block (its cells' classes say how) and the header is for screen readers only. */
  stackOnPhone?: boolean;
  /** Per row: a data-testid, classes, and data-* attributes. */
  rowProps?: (row: Row) => { testId?: string; className?: string; data?: Record<`data-${string}`, string> };
  detail?: RowDetail<Row>;
  /** Drawn under the table, inside the scrolling box (a pager). */
  footer?: ReactNode;
}

export function DataTable<Row>({
  columns: maybeColumns,
  rows,
  rowKey,
  empty,
  testId,
  label,
  caption,
  size = "sm",
  fixed,
  className,
  scroll,
  stackOnPhone,
  rowProps,
  detail,
  footer,
}: DataTableProps<Row>) {
  if (rows.length === 0 && empty !== undefined) return <EmptyState>{empty}</EmptyState>;
  const columns = maybeColumns.filter((column): column is Column<Row> => Boolean(column));
  const table = (
    <table
      className={cx("w-full", size === "xs" ? "text-xs" : "text-sm", fixed && "table-fixed", stackOnPhone && "max-sm:block", className)}
      data-testid={testId}
      aria-label={label}
    >
      {caption ? <caption className="pb-2 text-left text-sm font-medium text-ink">{caption}</caption> : null}
      <thead className={cx("border-b border-line", stackOnPhone && "max-sm:sr-only")}>
        <tr>
          {columns.map((column) => (
            <HeaderCell key={column.key} column={column} />
          ))}
        </tr>
      </thead>
      <tbody className={cx("divide-y divide-line", stackOnPhone && "max-sm:block")}>
        {rows.map((row) => {
          const props = rowProps?.(row);
          const open = detail?.isOpen(row) ?? false;
          return (
            <Fragment key={rowKey(row)}>
              <tr
                data-testid={props?.testId}
                className={cx(stackOnPhone && "max-sm:flex max-sm:flex-wrap max-sm:items-center max-sm:gap-x-3 max-sm:py-2", props?.className) || undefined}
                {...props?.data}
              >
                {columns.map((column) => {
                  const Cell = column.rowHeader ? "th" : "td";
                  return (
                    <Cell
                      key={column.key}
                      scope={column.rowHeader ? "row" : undefined}
                      className={cx(
                        CELL,
                        column.rowHeader && "text-left font-normal",
                        column.align === "right" && "text-right",
                        column.numeric && "tabular-nums",
                        typeof column.className === "function" ? column.className(row) : column.className,
                      )}
                      data-testid={column.cellTestId}
                    >
                      {column.cell(row)}
                    </Cell>
                  );
                })}
              </tr>
              {detail && open ? (
                <tr id={detail.id(row)}>
                  <td colSpan={columns.length} className={cx("bg-surface-muted px-3", detail.className ?? "py-3")}>
                    {detail.render(row)}
                  </td>
                </tr>
              ) : null}
            </Fragment>
          );
        })}
      </tbody>
    </table>
  );
  if (!scroll && !stackOnPhone) {
    return footer ? (
      <>
        {table}
        {footer}
      </>
    ) : (
      table
    );
  }
  return (
    <div className={cx("relative", stackOnPhone ? "sm:overflow-x-auto" : "overflow-x-auto")}>
      {table}
      {footer}
    </div>
  );
}

function HeaderCell<Row>({ column }: { column: Column<Row> }) {
  const content = column.srOnly ? <span className="sr-only">{column.header}</span> : column.header;
  const sort = column.sort;
  return (
    <th
      scope="col"
      className={cx(HEAD, column.align === "right" ? "text-right" : "text-left", column.headerClassName)}
      aria-sort={sort ? (sort.active ? (sort.order === "asc" ? "ascending" : "descending") : "none") : undefined}
    >
      {sort ? (
        <button type="button" className="uppercase hover:text-ink" onClick={sort.onSort}>
          {content}
          {sort.active ? (sort.order === "asc" ? " ▲" : " ▼") : ""}
        </button>
      ) : (
        content
      )}
    </th>
  );
}

/**
 * Which rows show their detail: `single` keeps at most one open (opening another closes it), as the
 * ledger does; otherwise each row opens on its own, as the audit log does.
 */
export function useExpanded<Key>({ single = false }: { single?: boolean } = {}) {
  const [open, setOpen] = useState<readonly Key[]>([]);
  return {
    isOpen: (key: Key) => open.includes(key),
    toggle: (key: Key) => setOpen((current) => toggled(current, key, single)),
  };
}

/** The open keys after a click on `key`'s toggle. */
export function toggled<Key>(open: readonly Key[], key: Key, single: boolean): readonly Key[] {
  if (open.includes(key)) return open.filter((k) => k !== key);
  return single ? [key] : [...open, key];
}
