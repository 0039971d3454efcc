/**
 * A spec field's path ("axes.1.values.0", "scenario.scene.massAKg") in the words the builder shows
 * next to that field ("Axis 2 (frame step dt), 1st value", "Mass of A"), so an error never names
 * the JSON path. Pure: safe to import in the browser.
 */
import type { SceneKind } from "@/lib/physics/types";
import { findParameter } from "@/lib/sweeps/parameters";
import { ordinal } from "./units";

const FIXED_LABELS: Record<string, string> = {
  name: "Sweep name",
  axes: "Axes",
  scenario: "Scenario",
  "scenario.scene": "Scene",
  "scenario.scene.kind": "Scene",
  "scenario.scene.bodies": "Discs of the snapshot",
  "scenario.scene.walls": "Walls of the snapshot",
  "scenario.contact": "Contact",
  "scenario.contact.model": "Contact model",
  "scenario.contact.damping": "Damping",
  "scenario.contact.damping.kind": "Damping kind",
  "scenario.contact.damping.value": "Damping value",
  "scenario.contact.material": "Material",
  "scenario.integrator": "Integrator",
  "scenario.seed": "Seed",
  "scenario.tolerances.energyDriftRel": "Energy gain allowed",
  "scenario.tolerances.maxOverlapFraction": "Deepest overlap allowed",
  "scenario.tolerances.blowUpEnergyFactor": "Blow-up energy factor",
};

const AXIS_KEYS: Record<string, string> = {
  parameter: "parameter",
  spacing: "spacing",
  from: "from",
  to: "to",
  count: "count",
  values: "values",
  pairs: "pairs",
};

function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

function parameterLabel(path: string, sceneKind: SceneKind): string | undefined {
  return findParameter(path, sceneKind)?.label;
}

/**
 * Words for a spec field. `axisParameters` are the axes' parameter paths in order, so an axis is
 * named by what it sweeps.
 */
export function describeSpecField(path: string, sceneKind: SceneKind, axisParameters: readonly string[] = []): string {
  const clean = path.replace(/^spec\./, "");
  if (clean === "" || clean === "(spec)") return "Spec";
  if (FIXED_LABELS[clean]) return FIXED_LABELS[clean];
  const parts = clean.split(".");
  if (parts[0] === "axes" && parts.length >= 2 && /^\d+$/.test(parts[1])) {
    const index = Number(parts[1]);
    const parameter = axisParameters[index];
    const what = parameter ? (parameterLabel(parameter, sceneKind) ?? parameter) : undefined;
    let text = `Axis ${index + 1}${what ? ` (${what})` : ""}`;
    if (parts.length >= 3) {
      const key = AXIS_KEYS[parts[2]] ?? parts[2];
      if ((parts[2] === "values" || parts[2] === "pairs") && parts.length >= 4 && /^\d+$/.test(parts[3])) text += `, ${ordinal(Number(parts[3]) + 1)} ${parts[2] === "values" ? "value" : "pair"}`;
      else text += `, ${key}`;
    }
    return text;
  }
  if (parts[0] === "scenario") {
    const inner = parts.slice(1).join(".");
    const label = parameterLabel(inner, sceneKind);
    if (label) return capitalise(label);
    if (parts[1] === "scene" && (parts[2] === "bodies" || parts[2] === "walls") && parts.length >= 4) {
      return `${parts[2] === "bodies" ? "Disc" : "Wall"} ${Number(parts[3]) + 1} of the snapshot${parts[4] ? `, ${parts[4]}` : ""}`;
    }
  }
  // An unknown path still reads as words rather than dots and indices.
  return capitalise(parts.filter((part) => !/^\d+$/.test(part)).join(" "));
}
