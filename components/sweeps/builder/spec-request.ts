/** What the builder's form hands on: the spec sent to the routes, and errors of nested fields in words. */
import type { SweepSpecInput } from "@/lib/sweeps/spec";

/** The first message at or under a react-hook-form error node, with the words of where it sits ("2nd value: …"). */
export function firstNestedMessage(node: unknown, describe: (relative: string) => string, relative = ""): string | undefined {
  if (!node || typeof node !== "object") return undefined;
  const record = node as Record<string, unknown>;
  if (typeof record.message === "string" && record.message) return relative ? `${describe(relative)}: ${record.message}` : record.message;
  for (const [key, child] of Object.entries(record)) {
    if (key === "ref" || key === "type" || key === "types") continue;
    const found = firstNestedMessage(child, describe, relative ? `${relative}.${key}` : key);
    if (found) return found;
  }
  return undefined;
}

/**
 * The spec as sent to the quote and submit routes. A scene still holding the discs and walls of the
 * stored snapshot it was opened from is sent by reference (the routes write them back in), so a
 * large snapshot stays within the JSON body limit.
 */
export function specForRequest(json: string, snapshot: { id: string; geometry: string } | undefined): unknown {
  const spec = JSON.parse(json) as SweepSpecInput;
  const scene = spec.scenario?.scene;
  if (!snapshot || scene?.kind !== "snapshot" || JSON.stringify([scene.bodies, scene.walls ?? []]) !== snapshot.geometry) return spec;
  const { bodies: _bodies, walls: _walls, ...rest } = scene;
  void _bodies;
  void _walls;
  return { ...spec, scenario: { ...spec.scenario, scene: { ...rest, snapshotId: snapshot.id } } };
}
