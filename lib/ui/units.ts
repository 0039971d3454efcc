/**
 * The game's own units, and how every number reaches the screen. A frame step is stored in seconds
 * (the spec's dtS), but a game programmer thinks of it as a frame rate ("60 Hz") or a fraction of a
 * second ("1/60 s"): this module parses what they type and writes it back the way the trade does
 * ("1/60 s · 16.7 ms"). Screens show a few significant figures; exports keep the stored number.
 *
 * Pure: safe to import in the browser.
 */
import { formatPrecise, formatSI, formatSignificant } from "@/lib/charts/format";

export { formatPrecise, formatSI, formatSignificant };

/** The spec path of the frame step. */
export const FRAME_STEP_PATH = "dtS";

/** Units a frame step may be typed in. */
export type FrameStepUnit = "Hz" | "s" | "ms";

export type FrameStepParse = { ok: true; seconds: number } | { ok: false; message: string };

const UNIT_FACTORS: Record<string, { kind: "rate" | "step"; factor: number }> = {
  hz: { kind: "rate", factor: 1 },
  fps: { kind: "rate", factor: 1 },
  khz: { kind: "rate", factor: 1000 },
  s: { kind: "step", factor: 1 },
  ms: { kind: "step", factor: 1e-3 },
  µs: { kind: "step", factor: 1e-6 },
  us: { kind: "step", factor: 1e-6 },
};

const NUMBER = String.raw`[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:e[+-]?\d+)?`;
const ENTRY = new RegExp(String.raw`^(${NUMBER})(?:\s*/\s*(${NUMBER}))?\s*([a-zµ]+)?$`, "i");

const HELP = "type a frame rate (60 Hz), a fraction of a second (1/60 s) or a step (16.7 ms)";

/**
 * One frame step as typed: "60 Hz", "60hz", "120 fps", "1/60", "1/60 s", "16.7 ms", "0.0167 s".
 * A fraction without a unit is seconds (that is how the trade writes a step); a plain number takes
 * `defaultUnit`, and without one it is refused rather than guessed (60 could be Hz or seconds).
 */
export function parseFrameStep(text: string, defaultUnit?: FrameStepUnit): FrameStepParse {
  const trimmed = text.trim().replace(/,/g, ".");
  if (trimmed === "") return { ok: false, message: `Enter a frame step: ${HELP}` };
  const match = ENTRY.exec(trimmed);
  if (!match) return { ok: false, message: `"${text.trim()}" is not a frame step: ${HELP}` };
  const numerator = Number(match[1]);
  const denominator = match[2] === undefined ? 1 : Number(match[2]);
  const unitText = match[3];
  if (match[2] !== undefined && denominator === 0) return { ok: false, message: `"${text.trim()}" divides by zero` };
  let unit: { kind: "rate" | "step"; factor: number } | undefined;
  if (unitText !== undefined) {
    unit = UNIT_FACTORS[unitText.toLowerCase()];
    if (!unit) return { ok: false, message: `"${unitText}" is not a unit of frame steps: use Hz, s or ms` };
  } else if (match[2] !== undefined) unit = UNIT_FACTORS.s;
  else if (defaultUnit) unit = UNIT_FACTORS[defaultUnit.toLowerCase()];
  else return { ok: false, message: `"${text.trim()}" needs a unit: Hz, s or ms (e.g. 60 Hz, 1/60 s, 16.7 ms)` };
  const magnitude = numerator / denominator;
  if (!Number.isFinite(magnitude) || magnitude <= 0) return { ok: false, message: `"${text.trim()}" must be more than zero` };
  // 1 / 60 and 60 Hz give the same double: divide once, never multiply by a rounded reciprocal.
  const seconds = unit.kind === "rate" ? 1 / (magnitude * unit.factor) : match[2] !== undefined ? (numerator * unit.factor) / denominator : magnitude * unit.factor;
  if (!Number.isFinite(seconds) || seconds <= 0) return { ok: false, message: `"${text.trim()}" is out of range` };
  return { ok: true, seconds };
}

const SHARED_UNITS: Record<string, FrameStepUnit> = { hz: "Hz", fps: "Hz", s: "s", ms: "ms" };

export type FrameStepListParse = { ok: true; seconds: number[] } | { ok: false; message: string; position?: number };

/**
 * A comma-separated list of frame steps: "30, 60, 120 Hz" (a unit after the last entry applies to
 * every entry without one), "1/120, 1/60, 1/30", "8.33 ms, 16.7 ms". The error names the entry by
 * its position and text, as the user typed it.
 */
export function parseFrameStepList(text: string, defaultUnit?: FrameStepUnit): FrameStepListParse {
  const parts = text
    .split(/[,;]/)
    .map((part) => part.trim())
    .filter((part) => part !== "");
  if (parts.length === 0) return { ok: false, message: `the list is empty: ${HELP}, separated by commas` };
  // A unit after the last entry ("30, 60, 120 Hz") is shared by every entry written without one.
  const trailing = /([a-zµ]+)$/i.exec(parts[parts.length - 1])?.[1]?.toLowerCase();
  const fallback = (trailing ? SHARED_UNITS[trailing] : undefined) ?? defaultUnit;
  const seconds: number[] = [];
  for (let i = 0; i < parts.length; i++) {
    const parsed = parseFrameStep(parts[i], fallback);
    if (!parsed.ok) return { ok: false, message: `${ordinal(i + 1)} value ${parsed.message}`, position: i };
    seconds.push(parsed.seconds);
  }
  return { ok: true, seconds };
}

/** 1 → "1st", 2 → "2nd", 11 → "11th", 23 → "23rd". */
export function ordinal(n: number): string {
  const tens = n % 100;
  if (tens >= 11 && tens <= 13) return `${n}th`;
  switch (n % 10) {
    case 1:
      return `${n}st`;
    case 2:
      return `${n}nd`;
    case 3:
      return `${n}rd`;
    default:
      return `${n}th`;
  }
}

/** The whole frame rate n with dt = 1/n (to a part in 10⁹), or null when the step is not a whole fraction of a second. */
export function wholeFrameRate(seconds: number): number | null {
  if (!(seconds > 0) || !Number.isFinite(seconds)) return null;
  const rate = Math.round(1 / seconds);
  if (rate < 1) return null;
  return Math.abs(rate * seconds - 1) <= 1e-9 ? rate : null;
}

/** A frame rate for short places (axis ticks, chips): 1/60 → "60 Hz", 0.004 → "250 Hz", 0.0003 → "3.33 kHz". */
export function formatFrameRate(seconds: number, digits = 3): string {
  if (!(seconds > 0) || !Number.isFinite(seconds)) return formatSignificant(seconds, digits);
  const whole = wholeFrameRate(seconds);
  if (whole !== null && whole < 10_000) return `${whole} Hz`;
  return formatSI(1 / seconds, "Hz", digits);
}

/** A frame step as the trade writes it: 1/60 → "1/60 s · 16.7 ms"; 0.0025 → "1/400 s · 2.5 ms"; 0.0007 → "0.7 ms · 1.43 kHz". */
export function formatFrameStep(seconds: number, digits = 3): string {
  if (!(seconds > 0) || !Number.isFinite(seconds)) return formatSignificant(seconds, digits);
  const whole = wholeFrameRate(seconds);
  const step = formatSI(seconds, "s", digits);
  if (whole !== null) return whole === 1 ? step : `1/${whole} s · ${step}`;
  return `${step} · ${formatFrameRate(seconds, digits)}`;
}

/** A frame step with its rate, for hovers and summaries: "60 Hz (1/60 s · 16.7 ms)". */
export function formatFrameStepWithRate(seconds: number, digits = 3): string {
  if (!(seconds > 0) || !Number.isFinite(seconds)) return formatSignificant(seconds, digits);
  const whole = wholeFrameRate(seconds);
  if (whole !== null && whole > 1) return `${whole} Hz (1/${whole} s · ${formatSI(seconds, "s", digits)})`;
  return `${formatFrameRate(seconds, digits)} (${formatSI(seconds, "s", digits)})`;
}

/** What a frame-step input shows for a stored step: "60 Hz" when it is a whole rate, else "16.7 ms" at full precision. */
export function frameStepInputText(seconds: number | undefined): string {
  if (seconds === undefined || !Number.isFinite(seconds)) return "";
  const whole = wholeFrameRate(seconds);
  if (whole !== null) return `${whole} Hz`;
  return `${Number((seconds * 1000).toPrecision(12))} ms`;
}

/** What a frame-step list input shows: "120, 60, 30 Hz" when every step is a whole rate, else "8.33, 16.7 ms" at full precision. */
export function frameStepListText(values: readonly number[]): string {
  if (values.length > 0 && values.every((value) => wholeFrameRate(value) !== null)) return `${values.map((value) => wholeFrameRate(value)).join(", ")} Hz`;
  return values.map((value) => frameStepInputText(value)).join(", ");
}

/**
 * One parameter value for the screen: the frame step in the game's units, anything else with an SI
 * prefix and `digits` significant figures. `precise` (hovers, a cell's detail) gives six figures.
 */
export function formatParameterValue(path: string, value: number | string, unit: string, options: { precise?: boolean; short?: boolean } = {}): string {
  if (typeof value === "string") return value;
  const digits = options.precise ? 6 : 3;
  if (path === FRAME_STEP_PATH) return options.short ? formatFrameRate(value, digits) : options.precise ? formatFrameStepWithRate(value, 4) : formatFrameStep(value, digits);
  return formatSI(value, unit, digits);
}

/** The unit a parameter is labelled with: the frame step reads in Hz / s. */
export function parameterUnitLabel(path: string, unit: string): string {
  if (path === FRAME_STEP_PATH) return "Hz or s";
  return unitLabel(unit);
}

/** A unit for a label: a ratio or a count has none, and says so. */
export function unitLabel(unit: string): string {
  return unit === "" ? "no unit" : unit;
}

/** What a frame-step field accepts (parseFrameStep). */
export const FRAME_STEP_INPUT_UNITS = "Hz, s or ms";

type ContactModel = "linear" | "hertz";

/**
 * The units that follow the contact model's force law. Linear spring F = k·δ: k in N/m, dashpot c in
 * N·s/m. Hertz F = k·δ^1.5: k in N/m^1.5, and the Hertz dashpot η·δ^(1/4)·δ̇ (lib/physics/types.ts)
 * puts η in N·s/m^1.25. Every other parameter keeps the unit the parameter table gives it.
 */
export function contactUnit(path: string, unit: string, model: ContactModel): string {
  const hertz = model === "hertz";
  if (path === "contact.stiffness") return hertz ? "N/m^1.5" : "N/m";
  if (path === "contact.damping.coefficient") return hertz ? "N·s/m^1.25" : "N·s/m";
  return unit;
}

/** The unit an input of the sweep builder is labelled with: what it accepts, under the scene's contact model. */
export function inputUnitLabel(path: string, unit: string, model: ContactModel): string {
  if (path === FRAME_STEP_PATH) return FRAME_STEP_INPUT_UNITS;
  return unitLabel(contactUnit(path, unit, model));
}

/** Frame rates a tick may sit on: the ones games ship at, and round numbers between them. */
const FRAME_RATE_TICKS_HZ = [1, 2, 5, 10, 15, 20, 24, 30, 60, 120, 240, 500, 1000, 2000, 5000, 10_000, 20_000, 50_000, 100_000];

/**
 * Where a frame-step axis puts its labelled ticks (in seconds): at the cells' own steps when there
 * are few of them (a 30/60/120 Hz axis reads exactly those), else at common frame rates inside the
 * axis's range, thinned to at most `maxCount`.
 */
export function frameStepTickValues(lowS: number, highS: number, cellValues: ArrayLike<number>, maxCount: number): number[] {
  if (cellValues.length > 0 && cellValues.length <= Math.max(2, maxCount)) return Array.from(cellValues);
  const inside = FRAME_RATE_TICKS_HZ.map((rate) => 1 / rate).filter((step) => step >= lowS * (1 - 1e-9) && step <= highS * (1 + 1e-9));
  if (inside.length <= maxCount) return inside.reverse();
  const every = Math.ceil(inside.length / Math.max(1, maxCount));
  return inside.filter((_, i) => i % every === 0).reverse();
}

/** A number a user reads: `digits` significant figures, no binary noise ("0.1 + 0.2" → "0.3"). */
export function formatNumber(value: number, digits = 3): string {
  return formatSignificant(value, digits);
}
