/**
 * What one row of the sweeps list shows, and nothing more. The server page sends the first page
 * in this form: the route's answer carries each sweep's whole spec and axes (the API's consumers
 * read them), which the table never shows and which made the page's HTML several times larger.
 * Plain module (no "use client"): the server page calls it, the list's types use it.
 */
import type { SweepView } from "@/lib/sweeps/sweep-view";

export type SweepListRow = Pick<SweepView, "id" | "name" | "status" | "reason" | "cells" | "cellsDone" | "computeMs" | "createdAt"> & {
  createdBy: { id: string; name: string } | null;
};

/** One page of the list as the table reads it (`GET …/sweeps` answers a superset of each row). */
export interface SweepsListPage {
  sweeps: SweepListRow[];
  page: number;
  pageSize: number;
  total: number;
  creators: { id: string; name: string }[];
}

export function sweepListRow(sweep: SweepListRow): SweepListRow {
  return {
    id: sweep.id,
    name: sweep.name,
    status: sweep.status,
    reason: sweep.reason,
    cells: sweep.cells,
    cellsDone: sweep.cellsDone,
    computeMs: sweep.computeMs,
    createdAt: sweep.createdAt,
    createdBy: sweep.createdBy,
  };
}
