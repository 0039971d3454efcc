/**
 * The words under a continuous legend that say how values became colours: the kind of scale and,
 * when the range was clipped to percentiles, how many cells lie beyond it.
 */
import { formatSI } from "@/lib/charts/format";
import { symlogConstant } from "@/lib/charts/normalise";
import type { ContinuousScale } from "./map-model";

function ordinal(p: number): string {
  const whole = Number(p.toPrecision(4));
  const mod100 = whole % 100;
  const suffix = mod100 >= 11 && mod100 <= 13 ? "th" : whole % 10 === 1 ? "st" : whole % 10 === 2 ? "nd" : whole % 10 === 3 ? "rd" : "th";
  return Number.isInteger(whole) ? `${whole}${suffix}` : `${whole}th`;
}

export function scaleKindText(scale: Pick<ContinuousScale, "normalisation" | "unit">): string {
  const n = scale.normalisation;
  switch (n.kind) {
    case "linear":
      return "Linear scale";
    case "log":
      return "Log scale";
    case "symmetric":
      return "Linear, zero in the middle";
    case "symlog":
      return `Symmetric log, linear within ±${formatSI(symlogConstant(n), scale.unit)}`;
  }
}

/** Lines: the scale kind, then the clip ("Clipped to 2nd–98th percentile") and the cells beyond. */
export function scaleNote(scale: Pick<ContinuousScale, "normalisation" | "unit" | "clip">, outside?: { below: number; above: number }): string[] {
  const lines = [scaleKindText(scale)];
  if (scale.clip) {
    const centred = scale.normalisation.kind === "symmetric" || scale.normalisation.kind === "symlog";
    lines.push(centred ? `Range: ${ordinal(scale.clip.high)} percentile of |value|` : `Range: ${ordinal(scale.clip.low)}–${ordinal(scale.clip.high)} percentile`);
  }
  if (outside && outside.below + outside.above > 0) {
    const parts: string[] = [];
    if (outside.below > 0) parts.push(`${outside.below.toLocaleString("en-US")} below`);
    if (outside.above > 0) parts.push(`${outside.above.toLocaleString("en-US")} above`);
    lines.push(`${parts.join(", ")} (end colours)`);
  }
  return lines;
}
