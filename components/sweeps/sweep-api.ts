"use client";
/** Client access to the sweep routes of issue 4 (`/api/v1/studios/{studioId}/…`), typed by the shared contract. */
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useLayoutEffect, useState } from "react";
import type { TimeSeries } from "@/lib/physics/types";
import type { Scenario } from "@/lib/physics/types";
import type { SweepStatus, SweepView } from "@/lib/sweeps/sweep-view";
import { apiFetch } from "@/lib/ui/api";
import { studioApiPath, seededBy } from "@/lib/ui/queries";
import { FIRST_CURSOR, withPage, type CellRow, type CellsPage, type HeldCells } from "./sweep-cells";
import { firstCellsUrl, takeArrivedEarlyAnswer, takeEarlyAnswer, type EarlyAnswer } from "./early-cells";

export type { CellRow } from "./sweep-cells";

export const SWEEP_STATUSES: readonly SweepStatus[] = ["queued", "running", "paused", "done", "failed", "cancelled"];
export const ACTIVE_STATUSES: readonly SweepStatus[] = ["queued", "running", "paused"];

/** A sweep and its axes as the server builds them (type-only: nothing of the server reaches the client bundle). */
export type { SweepAxisView, SweepStatus } from "@/lib/sweeps/sweep-view";
export type Sweep = SweepView;

/** The quote as the server computes it (a type-only import: nothing of the server reaches the client bundle). */
export type { Quote } from "@/lib/queue/submit";

export interface CellDetail {
  cell: CellRow & { scenario: Scenario };
  series: TimeSeries;
}

export interface Envelope {
  xPath: string;
  yPath: string;
  margin: number;
  bound: "max" | "min";
  rows: { x: number; safeY: number | null; yLimit: number | null; status: "ok" | "none-stable" | "pending" }[];
}

export const sweepsPath = (studioId: string) => `${studioApiPath(studioId)}/sweeps`;
export const sweepPath = (studioId: string, sweepId: string) => `${sweepsPath(studioId)}/${encodeURIComponent(sweepId)}`;

export const sweepKeys = {
  list: (studioId: string, status: string, page: number) => ["studio", studioId, "sweeps", status, page] as const,
  sweep: (studioId: string, sweepId: string) => ["studio", studioId, "sweep", sweepId] as const,
  cells: (studioId: string, sweepId: string) => ["studio", studioId, "sweep", sweepId, "cells"] as const,
  cell: (studioId: string, sweepId: string, index: number) => ["studio", studioId, "sweep", sweepId, "cell", index] as const,
};

export function isActive(status: SweepStatus | undefined): boolean {
  return status !== undefined && ACTIVE_STATUSES.includes(status);
}

/** Milliseconds of compute as minutes with two decimals (how compute is sold). */
export function formatMinutes(ms: number): string {
  return `${(ms / 60_000).toFixed(2)} min`;
}

const MODEL_UNITS: Record<string, { linear: string; hertz: string }> = {
  "contact.stiffness": { linear: "N/m", hertz: "N/m^1.5" },
  "contact.damping.coefficient": { linear: "N·s/m", hertz: "N·s/m^1.25" },
};

/**
 * The unit of a stiffness or damping axis depends on the contact model; when the sweep has one
 * model, name that unit alone (tick labels then read "1 MN/m", not the two-model description).
 */
export function withResolvedUnits(sweep: Sweep): Sweep {
  if (sweep.axes.some((axis) => axis.path === "contact.model")) return sweep;
  const model = sweep.spec.scenario.contact.model;
  return { ...sweep, axes: sweep.axes.map((axis) => (MODEL_UNITS[axis.path] ? { ...axis, unit: MODEL_UNITS[axis.path][model] } : axis)) };
}

export function useSweep(studioId: string, sweepId: string, initialSweep?: Sweep) {
  return useQuery({
    queryKey: sweepKeys.sweep(studioId, sweepId),
    queryFn: async () => (await apiFetch<{ sweep: Sweep }>(sweepPath(studioId, sweepId))).sweep,
    // The server page's copy, when it sent one: the first paint shows the sweep, not a loading row.
    ...seededBy(initialSweep),
    select: withResolvedUnits,
    // Poll every second while the sweep can still change; stop once it has finished.
    refetchInterval: (query) => (query.state.data === undefined || isActive(query.state.data.status) ? 1000 : false),
  });
}

const heldCellRows = (held: HeldCells) => held.cells;

/**
 * The sweep's done cells, in index order. The first read asks for every cell; each later one
 * (every second while the sweep is active, and once more when it finishes) only for the cells of
 * the results written after the cursor of the cells already held, merged in by index.
 */
/** The cells page of an early answer (early-cells.ts) that succeeded; null for anything else, which is asked again so errors reach the page as apiFetch words them. */
function earlyPage(early: EarlyAnswer | null | undefined): CellsPage | null {
  return early && early.status === 200 ? (JSON.parse(early.text) as CellsPage) : null;
}

export function useSweepCells(studioId: string, sweepId: string, active: boolean) {
  const queryClient = useQueryClient();
  const queryKey = sweepKeys.cells(studioId, sweepId);
  // When the early answer (early-cells.ts) arrived while the scripts loaded, it becomes the query's
  // data in the commit that hydrates the page, before the query's own first read starts: the map
  // draws every cell before the first paint. Not during render: the server's HTML was drawn without
  // cells, and the hydrating render must match it. The re-render this asks for runs before paint.
  const [, setSeeded] = useState(false);
  useLayoutEffect(() => {
    const key = sweepKeys.cells(studioId, sweepId);
    if (queryClient.getQueryData(key) !== undefined) return;
    const page = earlyPage(takeArrivedEarlyAnswer(firstCellsUrl(studioId, sweepId)));
    if (!page) return;
    queryClient.setQueryData<HeldCells>(key, withPage(undefined, page));
    // The one re-render after hydration is the point: it draws the map with the cells before the first paint.
    // eslint-disable-next-line react-hooks/set-state-in-effect
    setSeeded(true);
  }, [queryClient, studioId, sweepId]);
  return useQuery({
    queryKey,
    queryFn: async () => {
      const held = queryClient.getQueryData<HeldCells>(queryKey);
      const url = `${sweepPath(studioId, sweepId)}/cells?after=${encodeURIComponent(held?.cursor ?? FIRST_CURSOR)}`;
      // The first read may have been started by the page's HTML (early-cells.ts): take its answer when it
      // succeeded; on anything else ask again, so errors reach the page as apiFetch words them.
      const page = (held ? null : earlyPage(await takeEarlyAnswer(url))) ?? (await apiFetch<CellsPage>(url));
      return withPage(held, page);
    },
    select: heldCellRows,
    // withPage keeps the held object when nothing changed; comparing tens of thousands of cells
    // deeply every second, as structural sharing would, is the work this avoids.
    structuralSharing: false,
    refetchInterval: active ? 1000 : false,
  });
}
