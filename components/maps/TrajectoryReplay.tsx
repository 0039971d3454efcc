"use client";
/**
 * Replay of one cell's trajectory on a canvas: discs at their radii (numbered 1…N as everywhere
 * else), walls, fading trails, play / pause, a time scrubber and a playback speed. The camera
 * follows the bodies by default (fits all of them at each moment), or one disc, or shows the whole
 * run; playback slows down around contacts so each lasts about a second on screen.
 *
 * Props:
 * - `series`: the engine's TimeSeries (positions per body per sample, SI units).
 * - `radiiM`: the radius of each body, in the same order as `series.bodies`.
 * - `walls` (optional): static walls as lines n·p = offset (unit normal towards the free side),
 *   the shape lib/physics/scenes.ts uses.
 * - `bodyLabels` (optional), `height` (CSS px, default 360), `trailSamples` (default 80).
 *
 * Runs with friction (series.angleRad / frictionContacts present) also show each disc's rotation as
 * a mark on its rim, and each contact's friction state at the nearest sample: a filled square where
 * it sticks, an open triangle where it slides (shape, not colour alone, tells them apart), with a
 * legend and the counts in words.
 */
import { useEffect, useId, useLayoutEffect, useMemo, useRef, useState } from "react";
import type { TimeSeries } from "@/lib/physics/types";
import { formatPrecise, formatSI } from "@/lib/charts/format";
import { niceStep } from "@/lib/charts/ticks";
import {
  boundsAt,
  fitView,
  frictionContactsAt,
  includeWalls,
  interpolateAt,
  nearestSample,
  sampleAt,
  trajectoryBounds,
  typicalContactS,
  wallSegmentOnCanvas,
  worldToCanvas,
  type ReplayWall,
  type WorldBounds,
} from "@/lib/charts/replay";
import { seriesColour } from "@/lib/charts/series-style";
import { readChrome } from "./render";
import { inkOn } from "./map-model";
import { useDevicePixelRatio, useElementWidth, useThemeVersion } from "./use-canvas-env";

export interface TrajectoryReplayProps {
  series: TimeSeries;
  radiiM: readonly number[];
  walls?: readonly ReplayWall[];
  bodyLabels?: readonly string[];
  height?: number;
  trailSamples?: number;
}

/** Glyph sizes (CSS px) of the stick/slide marks, shared by the canvas and the legend. */
const CONTACT_MARK_PX = 5;

function drawStickMark(ctx: CanvasRenderingContext2D, x: number, y: number, ink: string): void {
  ctx.fillStyle = ink;
  ctx.fillRect(x - CONTACT_MARK_PX, y - CONTACT_MARK_PX, 2 * CONTACT_MARK_PX, 2 * CONTACT_MARK_PX);
}

function drawSlideMark(ctx: CanvasRenderingContext2D, x: number, y: number, ink: string, surface: string): void {
  const r = CONTACT_MARK_PX + 1.5;
  ctx.beginPath();
  ctx.moveTo(x, y - r);
  ctx.lineTo(x + r * 0.92, y + r * 0.6);
  ctx.lineTo(x - r * 0.92, y + r * 0.6);
  ctx.closePath();
  ctx.fillStyle = surface;
  ctx.fill();
  ctx.lineWidth = 2;
  ctx.strokeStyle = ink;
  ctx.stroke();
}

/** "1 sliding, 2 sticking" at a sample, or null for a run without friction. */
export function frictionStateText(series: TimeSeries, sample: number): string | null {
  if (!series.slidingContacts || !series.stickingContacts) return null;
  const sliding = series.slidingContacts[sample] ?? 0;
  const sticking = series.stickingContacts[sample] ?? 0;
  if (sliding === 0 && sticking === 0) return "no friction contact";
  return `${sliding} sliding, ${sticking} sticking`;
}

/** How long the whole run takes to play, in wall-clock seconds. */
const RUN_SECONDS_CHOICES = [2, 5, 10, 30] as const;

/** Frame the run; a run that flies apart (span ≫ start) is framed around its start instead. */
function frameOf(series: TimeSeries, radiiM: readonly number[], walls: readonly ReplayWall[]): { bounds: WorldBounds; fittedToStart: boolean } | null {
  const all = trajectoryBounds(series.bodies, radiiM);
  const start = trajectoryBounds(
    series.bodies.map((b) => ({ xM: [b.xM[0]], yM: [b.yM[0]] })),
    radiiM,
  );
  if (!all || !start) return null;
  const span = (b: WorldBounds) => Math.max(b.maxX - b.minX, b.maxY - b.minY);
  const startSpan = Math.max(span(start), 1e-9);
  let bounds = all;
  let fittedToStart = false;
  if (span(all) > 50 * startSpan) {
    const cx = (start.minX + start.maxX) / 2;
    const cy = (start.minY + start.maxY) / 2;
    const half = 2.5 * startSpan;
    bounds = { minX: cx - half, maxX: cx + half, minY: cy - half, maxY: cy + half };
    fittedToStart = true;
  }
  return { bounds: includeWalls(bounds, walls, span(bounds)), fittedToStart };
}

export function TrajectoryReplay({ series, radiiM, walls = [], bodyLabels, height = 360, trailSamples = 80 }: TrajectoryReplayProps) {
  const boxRef = useRef<HTMLDivElement>(null);
  const canvasRef = useRef<HTMLCanvasElement>(null);
  const width = useElementWidth(boxRef);
  const dpr = useDevicePixelRatio();
  const themeVersion = useThemeVersion();
  const scrubId = useId();
  const speedId = useId();
  const n = series.tS.length;
  const startS = n > 0 ? series.tS[0] : 0;
  const endS = n > 0 ? series.tS[n - 1] : 0;
  const durationS = Math.max(0, endS - startS);
  const [timeS, setTimeS] = useState(startS);
  const [playing, setPlaying] = useState(false);
  const [runSeconds, setRunSeconds] = useState<number>(5);
  /** "all": fit every body at each moment; "whole": the whole run's frame; a number: follow that disc (0-based). */
  const [camera, setCamera] = useState<"all" | "whole" | number>("all");
  const [slowContacts, setSlowContacts] = useState(true);
  const cameraId = useId();
  const contactS = useMemo(() => (n > 0 ? typicalContactS(series.tS, series.maxOverlapM) : null), [series, n]);
  const largestRadius = useMemo(() => radiiM.reduce((a, b) => Math.max(a, b), 0), [radiiM]);

  const problem =
    n === 0
      ? "series.tS has no samples"
      : radiiM.length !== series.bodies.length
        ? `radiiM has ${radiiM.length} radii for ${series.bodies.length} bodies`
        : (series.bodies.map((b, i) => (b.xM.length !== n || b.yM.length !== n ? `series.bodies[${i}] has ${b.xM.length} positions but series.tS has ${n}` : null)).find(Boolean) ?? null);
  const frame = useMemo(() => (problem ? null : frameOf(series, radiiM, walls)), [series, radiiM, walls, problem]);

  // Playback: advance simulated time at durationS / runSeconds per wall-clock second.
  const timeRef = useRef(timeS);
  useEffect(() => {
    timeRef.current = timeS;
  }, [timeS]);
  useEffect(() => {
    if (!playing || durationS <= 0) return;
    let last = performance.now();
    let handle = requestAnimationFrame(function tick(now) {
        // Around a contact the rate drops so the contact lasts about a second on screen.
      const normalRate = durationS / runSeconds;
      const touching = slowContacts && contactS !== null && interpolateAt(series.maxOverlapM, sampleAt(series.tS, timeRef.current)) > 0;
      const rate = touching ? Math.min(normalRate, (contactS as number) / 1) : normalRate;
      const next = Math.min(endS, timeRef.current + ((now - last) / 1000) * rate);
      last = now;
      timeRef.current = next;
      setTimeS(next);
      if (next >= endS) setPlaying(false);
      else handle = requestAnimationFrame(tick);
    });
    return () => cancelAnimationFrame(handle);
  }, [playing, durationS, runSeconds, endS, slowContacts, contactS, series]);

  useLayoutEffect(() => {
    const canvas = canvasRef.current;
    if (!canvas || !frame || width <= 0) return;
    canvas.width = Math.round(width * dpr);
    canvas.height = Math.round(height * dpr);
    const ctx = canvas.getContext("2d");
    if (!ctx) return;
    const chrome = readChrome(canvas);
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = chrome.surface;
    ctx.fillRect(0, 0, width, height);
    const at = sampleAt(series.tS, timeS);
    // The camera: the whole run's frame, or the bodies (all, or one disc) where they are now.
    const following = camera === "whole" ? null : boundsAt(series.bodies, radiiM, at, camera === "all" ? null : camera, camera === "all" ? 6 * largestRadius : 10 * (radiiM[camera] ?? largestRadius));
    const view = fitView(following ? includeWalls(following, walls, following.maxX - following.minX) : frame.bounds, width, height, 24);

    // Walls: the line, with short hatching on the solid side.
    ctx.strokeStyle = chrome.inkMuted;
    for (const wall of walls) {
      const segment = wallSegmentOnCanvas(wall, view, width, height);
      if (!segment) continue;
      const [x0, y0, x1, y1] = segment;
      ctx.lineWidth = 2;
      ctx.beginPath();
      ctx.moveTo(x0, y0);
      ctx.lineTo(x1, y1);
      ctx.stroke();
      const length = Math.hypot(x1 - x0, y1 - y0);
      if (length < 1) continue;
      const alongX = (x1 - x0) / length;
      const alongY = (y1 - y0) / length;
      // Ticks lean into the solid side (−n; the canvas flips y) and along the wall.
      const tickX = -wall.normalX * 7 + alongX * 4;
      const tickY = wall.normalY * 7 + alongY * 4;
      ctx.lineWidth = 1;
      ctx.beginPath();
      for (let d = 0; d <= length; d += 10) {
        const px = x0 + alongX * d;
        const py = y0 + alongY * d;
        ctx.moveTo(px, py);
        ctx.lineTo(px + tickX, py + tickY);
      }
      ctx.stroke();
    }

    // Trails: the last `trailSamples` samples, older segments fainter.
    ctx.lineCap = "round";
    ctx.lineJoin = "round";
    series.bodies.forEach((body, b) => {
      const first = Math.max(0, at.index - trailSamples);
      ctx.strokeStyle = seriesColour(b);
      ctx.lineWidth = 1.5;
      for (let i = first; i < at.index; i++) {
        const [ax, ay] = worldToCanvas(view, body.xM[i], body.yM[i]);
        const [bx, by] = worldToCanvas(view, body.xM[i + 1], body.yM[i + 1]);
        if (![ax, ay, bx, by].every(Number.isFinite)) continue;
        ctx.globalAlpha = 0.15 + (0.75 * (i - first + 1)) / Math.max(1, at.index - first);
        ctx.beginPath();
        ctx.moveTo(ax, ay);
        ctx.lineTo(bx, by);
        ctx.stroke();
      }
      ctx.globalAlpha = 1;
    });

    // Discs at their radii.
    ctx.font = `600 11px ${chrome.fontFamily}`;
    ctx.textAlign = "center";
    ctx.textBaseline = "middle";
    series.bodies.forEach((body, b) => {
      const x = interpolateAt(body.xM, at);
      const y = interpolateAt(body.yM, at);
      const [cx, cy] = worldToCanvas(view, x, y);
      if (!Number.isFinite(cx) || !Number.isFinite(cy)) return;
      const r = Math.max(1.5, radiiM[b] * view.scalePxPerM);
      ctx.beginPath();
      ctx.arc(cx, cy, r, 0, Math.PI * 2);
      ctx.globalAlpha = 0.8;
      ctx.fillStyle = seriesColour(b);
      ctx.fill();
      ctx.globalAlpha = 1;
      ctx.lineWidth = 1.25;
      ctx.strokeStyle = chrome.ink;
      ctx.stroke();
      // Rotation: a spoke from the centre to a dot on the rim at the disc's angle (the canvas flips y).
      if (body.angleRad && r >= 4) {
        const angle = interpolateAt(body.angleRad, at);
        if (Number.isFinite(angle)) {
          const rimX = cx + r * Math.cos(angle);
          const rimY = cy - r * Math.sin(angle);
          ctx.lineWidth = 2;
          ctx.beginPath();
          ctx.moveTo(cx, cy);
          ctx.lineTo(rimX, rimY);
          ctx.stroke();
          ctx.beginPath();
          ctx.arc(rimX, rimY, Math.max(2, Math.min(4, r / 6)), 0, Math.PI * 2);
          ctx.fillStyle = chrome.ink;
          ctx.fill();
        }
      }
      if (r >= 10 && series.bodies.length <= 20) {
        ctx.fillStyle = inkOn(seriesColour(b));
        ctx.fillText(String(b + 1), cx, cy);
      }
    });

    // Friction contacts at the nearest sample: sticking ■, sliding △.
    if (series.frictionContacts) {
      const sample = nearestSample(at);
      for (const contact of frictionContactsAt(series.bodies, radiiM, walls, series.frictionContacts[sample] ?? [], sample)) {
        const [px, py] = worldToCanvas(view, contact.xM, contact.yM);
        if (!Number.isFinite(px) || !Number.isFinite(py)) continue;
        if (contact.sliding) drawSlideMark(ctx, px, py, chrome.ink, chrome.surface);
        else drawStickMark(ctx, px, py, chrome.ink);
      }
    }

    // Scale bar: a 1-2-5 length near 100 px.
    const barM = niceStep(100 / view.scalePxPerM);
    const barPx = barM * view.scalePxPerM;
    ctx.globalAlpha = 0.85;
    ctx.fillStyle = chrome.surface;
    ctx.fillRect(8, height - 40, barPx + 16, 34);
    ctx.globalAlpha = 1;
    ctx.strokeStyle = chrome.ink;
    ctx.fillStyle = chrome.ink;
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(16, height - 16);
    ctx.lineTo(16 + barPx, height - 16);
    ctx.moveTo(16, height - 20);
    ctx.lineTo(16, height - 12);
    ctx.moveTo(16 + barPx, height - 20);
    ctx.lineTo(16 + barPx, height - 12);
    ctx.stroke();
    ctx.textAlign = "left";
    ctx.textBaseline = "bottom";
    ctx.font = `11px ${chrome.fontFamily}`;
    ctx.fillText(formatSI(barM, "m"), 16, height - 22);

    // Overlap at this moment.
    const overlapM = interpolateAt(series.maxOverlapM, at);
    const overlapText = overlapM > 0 ? `overlap ${formatSI(overlapM, "m")}` : "no contact";
    ctx.globalAlpha = 0.85;
    ctx.fillStyle = chrome.surface;
    ctx.fillRect(width - 20 - ctx.measureText(overlapText).width, 6, ctx.measureText(overlapText).width + 14, 18);
    ctx.globalAlpha = 1;
    ctx.textAlign = "right";
    ctx.textBaseline = "top";
    ctx.fillStyle = overlapM > 0 ? chrome.ink : chrome.inkMuted;
    ctx.fillText(overlapText, width - 12, 10);
  }, [frame, width, height, dpr, themeVersion, timeS, series, radiiM, walls, trailSamples, camera, largestRadius]);

  if (problem || !frame) {
    return (
      <p role="alert" className="text-sm text-danger">
        This trajectory cannot be replayed — {problem ?? "no finite positions in series.bodies"}
      </p>
    );
  }

  const frictionState = frictionStateText(series, nearestSample(sampleAt(series.tS, timeS)));
  const rotating = series.bodies.some((body) => body.angleRad !== undefined);
  const progress = durationS > 0 ? (timeS - startS) / durationS : 0;
  const realTimeFactor = durationS / runSeconds;
  return (
    <figure className="m-0 space-y-2">
      <div ref={boxRef} className="relative w-full overflow-hidden rounded-md border border-line bg-surface" style={{ height }}>
        <canvas
          ref={canvasRef}
          role="img"
          aria-label={`Trajectory of ${series.bodies.length} ${series.bodies.length === 1 ? "body" : "bodies"} at t = ${formatPrecise(timeS, "s")}${frictionState ? `; friction contacts: ${frictionState}` : ""}`}
          className="block"
          style={{ width: width || "100%", height }}
        />
      </div>
      <div className="flex flex-wrap items-center gap-3 text-sm text-ink">
        <button
          type="button"
          onClick={() => {
            if (!playing && timeS >= endS) setTimeS(startS);
            setPlaying((p) => !p);
          }}
          className="min-w-20 rounded-md border border-line bg-surface px-3 py-1.5 font-semibold hover:bg-surface-muted"
          aria-pressed={playing}
        >
          {playing ? "Pause" : timeS >= endS && durationS > 0 ? "Replay" : "Play"}
        </button>
        <label htmlFor={scrubId} className="sr-only">
          Time
        </label>
        <input
          id={scrubId}
          type="range"
          min={0}
          max={1000}
          step={1}
          value={Math.round(progress * 1000)}
          onChange={(event) => {
            setPlaying(false);
            setTimeS(startS + (Number(event.target.value) / 1000) * durationS);
          }}
          aria-valuetext={`t = ${formatPrecise(timeS, "s")}`}
          className="min-w-40 flex-1 accent-[var(--kd-action)]"
        />
        <output className="w-28 font-mono text-xs text-ink-muted">t = {formatSI(timeS, "s", 4)}</output>
        <label htmlFor={speedId} className="text-ink-muted">
          Speed
        </label>
        <select
          id={speedId}
          value={runSeconds}
          onChange={(event) => setRunSeconds(Number(event.target.value))}
          className="rounded-md border border-line bg-surface px-2 py-1 text-ink"
        >
          {RUN_SECONDS_CHOICES.map((s) => (
            <option key={s} value={s}>
              whole run in {s} s
            </option>
          ))}
        </select>
        <span className="text-xs text-ink-muted">({formatSignificantFactor(realTimeFactor)} real time)</span>
        <label htmlFor={cameraId} className="text-ink-muted">
          View
        </label>
        <select
          id={cameraId}
          value={String(camera)}
          onChange={(event) => setCamera(event.target.value === "all" || event.target.value === "whole" ? event.target.value : Number(event.target.value))}
          className="rounded-md border border-line bg-surface px-2 py-1 text-ink"
        >
          <option value="all">Follow the bodies</option>
          <option value="whole">Whole run</option>
          {series.bodies.length <= 40
            ? series.bodies.map((_, b) => (
                <option key={b} value={b}>
                  Follow {bodyLabels?.[b] ?? `disc ${b + 1}`}
                </option>
              ))
            : null}
        </select>
        {contactS !== null ? (
          <label className="flex items-center gap-1.5 text-ink-muted">
            <input type="checkbox" checked={slowContacts} onChange={(event) => setSlowContacts(event.target.checked)} />
            Slow motion around contacts
          </label>
        ) : null}
      </div>
      {frictionState !== null || rotating ? (
        <div className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-muted" data-testid="replay-friction-legend">
          {rotating ? (
            <span className="flex items-center gap-1.5">
              <svg aria-hidden="true" width="16" height="16" viewBox="0 0 16 16" className="text-ink">
                <circle cx="8" cy="8" r="6.5" fill="none" stroke="currentColor" strokeWidth="1.25" />
                <line x1="8" y1="8" x2="14" y2="8" stroke="currentColor" strokeWidth="2" />
                <circle cx="14" cy="8" r="2" fill="currentColor" />
              </svg>
              rim mark: the disc&apos;s rotation
            </span>
          ) : null}
          {frictionState !== null ? (
            <>
              <span className="flex items-center gap-1.5">
                <svg aria-hidden="true" width="12" height="12" viewBox="0 0 12 12" className="text-ink">
                  <rect x="1" y="1" width="10" height="10" fill="currentColor" />
                </svg>
                contact sticking (below μ·F_n)
              </span>
              <span className="flex items-center gap-1.5">
                <svg aria-hidden="true" width="14" height="14" viewBox="0 0 14 14" className="text-ink">
                  <polygon points="7,1 13,11.5 1,11.5" fill="none" stroke="currentColor" strokeWidth="2" />
                </svg>
                contact sliding (at μ·F_n)
              </span>
              <output className="font-mono" data-testid="replay-friction-state">
                now: {frictionState}
              </output>
            </>
          ) : null}
        </div>
      ) : null}
      {frame.fittedToStart && camera === "whole" && <p className="text-xs text-ink-muted">The bodies fly far apart in this run; the view is fitted to where they started. Pick “Follow the bodies” to keep them in view.</p>}
      {bodyLabels && bodyLabels.length > 0 && (
        <ul className="flex flex-wrap gap-3 text-xs text-ink-muted">
          {bodyLabels.map((label, b) => (
            <li key={b} className="flex items-center gap-1.5">
              <span aria-hidden="true" className="inline-block size-3 rounded-full border border-ink" style={{ background: seriesColour(b) }} />
              {b + 1}. {label}
            </li>
          ))}
        </ul>
      )}
    </figure>
  );
}

function formatSignificantFactor(factor: number): string {
  return `${formatSI(factor, "", 2)}×`;
}
