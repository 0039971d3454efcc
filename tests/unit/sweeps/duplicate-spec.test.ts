/** Duplicate and edit: a stored (parsed) spec is accepted again as the start of a new sweep, without its name. */
import { describe, expect, it } from "vitest";
import { duplicateSpec, parseSweepSpec, type SweepSpec } from "@/lib/sweeps/spec";
import { SWEEP_TEMPLATES } from "@/lib/sweeps/templates";

describe("duplicate spec", () => {
  it("parses every template's stored spec again, unnamed, to the same cells", () => {
    for (const template of SWEEP_TEMPLATES) {
      const stored = parseSweepSpec(template.spec);
      if (!stored.ok) throw new Error(`template ${template.id} does not parse`);
      const copy = duplicateSpec(stored.spec as SweepSpec);
      expect(copy.name).toBe("");
      const again = parseSweepSpec(copy);
      expect(again.ok, template.id).toBe(true);
      if (again.ok) expect({ ...again.spec, name: undefined }).toEqual({ ...stored.spec, name: undefined });
    }
  });
});
