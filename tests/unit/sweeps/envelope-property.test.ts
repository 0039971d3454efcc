/**
 * Properties of the safe envelope over small random grids (fast-check). The rule is our own
 * (lib/sweeps/envelope.ts, docs/api.md "Safe envelope"); no outside reference.
 */
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import type { Verdict } from "../../../lib/physics/types";
import { VERDICTS } from "../../../lib/physics/types";
import { computeEnvelope, envelopeCsv, envelopeDamping, envelopeDocument, envelopeDocumentSchema, envelopeFriction } from "../../../lib/sweeps/envelope";
import { cellIndex, type ExpandedAxis } from "../../../lib/sweeps/grid";

const NOT_STABLE = VERDICTS.filter((verdict) => verdict !== "stable");

/** Axis x (stiffness-like) and y (step-like) with rising positive values. */
const grids = fc
  .record({
    xs: fc.integer({ min: 1, max: 6 }),
    ys: fc.integer({ min: 1, max: 8 }),
    start: fc.double({ min: 1e-4, max: 1, noNaN: true }),
    ratio: fc.double({ min: 1.01, max: 3, noNaN: true }),
    margin: fc.double({ min: 0, max: 0.9, noNaN: true }),
    failing: fc.constantFrom(...NOT_STABLE),
  })
  .chain((base) =>
    fc.record({
      base: fc.constant(base),
      // Monotone verdicts: per row the first unstable position, non-increasing along x (stiffer fails sooner).
      cuts: fc.array(fc.integer({ min: 0, max: base.ys }), { minLength: base.xs, maxLength: base.xs }).map((cuts) => [...cuts].sort((a, b) => b - a)),
      noise: fc.array(fc.constantFrom<Verdict | undefined>("stable", undefined, ...NOT_STABLE), { minLength: base.xs * base.ys, maxLength: base.xs * base.ys }),
    }),
  );

function axesOf(xs: number, ys: number, start: number, ratio: number): ExpandedAxis[] {
  return [
    { parameter: "contact.stiffness", label: "contact stiffness k", unit: "N/m", values: Array.from({ length: xs }, (_, i) => 1000 * 2 ** i) },
    { parameter: "dtS", label: "frame step", unit: "s", values: Array.from({ length: ys }, (_, i) => start * ratio ** i) },
  ];
}

describe("safe envelope properties", () => {
  it("is monotone where the verdicts are, and applies the margin exactly", () => {
    fc.assert(
      fc.property(grids, ({ base, cuts }) => {
        const axes = axesOf(base.xs, base.ys, base.start, base.ratio);
        const verdictAt = (index: number): Verdict => {
          const ix = Math.floor(index / base.ys);
          const iy = index % base.ys;
          return iy < cuts[ix] ? "stable" : base.failing;
        };
        const envelope = computeEnvelope({ axes, verdictAt, x: 0, y: 1, margin: base.margin, bound: "max" });
        const yValues = axes[1].values as number[];
        let previous = Infinity;
        envelope.rows.forEach((row, ix) => {
          if (cuts[ix] === 0) {
            expect(row.status).toBe("none-stable");
            expect(row.yLimit).toBeNull();
            previous = -Infinity;
            return;
          }
          expect(row.status).toBe("ok");
          expect(row.safeY).toBe(yValues[cuts[ix] - 1]);
          // Margin as documented: (1 − margin) × safe, exactly.
          expect(row.yLimit).toBe((1 - base.margin) * (row.safeY as number));
          // Every cell at or below the safe y is stable.
          for (let iy = 0; iy < cuts[ix]; iy++) expect(verdictAt(cellIndex(axes, [ix, iy]))).toBe("stable");
          // Monotone along x: never above the previous row's limit.
          expect(row.yLimit as number).toBeLessThanOrEqual(previous);
          previous = row.yLimit as number;
        });
      }),
      { numRuns: 300 },
    );
  });

  it("never says none-stable for a row whose walk meets an uncomputed cell, and never gives a limit past it", () => {
    fc.assert(
      fc.property(grids, ({ base, noise }) => {
        const axes = axesOf(base.xs, base.ys, base.start, base.ratio);
        const envelope = computeEnvelope({ axes, verdictAt: (index) => noise[index], x: 0, y: 1, margin: base.margin, bound: "max" });
        envelope.rows.forEach((row, ix) => {
          const walk = noise.slice(ix * base.ys, (ix + 1) * base.ys);
          const firstNotStable = walk.findIndex((verdict) => verdict !== "stable");
          if (firstNotStable >= 0 && walk[firstNotStable] === undefined) expect(row.status).toBe("pending");
          else if (firstNotStable === 0) expect(row.status).toBe("none-stable");
          else expect(row.status).toBe("ok");
        });
      }),
      { numRuns: 300 },
    );
  });

  it("exports validate against the published schema, in JSON and as CSV with units", () => {
    // A damped linear contact with a target restitution of 0.8 (the damping under both criteria).
    const dampingOfGrid = envelopeDamping({ scenario: { contact: { model: "linear", stiffness: 1e4, damping: { kind: "restitution", value: 0.8 } } }, axes: [] }, []);
    // Coulomb friction μ 0.4 with a tangential spring of 2/7 of the normal one.
    const frictionOfGrid = envelopeFriction({ scenario: { contact: { model: "linear", stiffness: 1e4, damping: { kind: "none" }, friction: { coefficient: 0.4, stiffnessRatio: 2 / 7 } } } }, []);
    fc.assert(
      fc.property(grids, fc.string({ maxLength: 40 }), ({ base, noise }, name) => {
        const axes = axesOf(base.xs, base.ys, base.start, base.ratio);
        const envelope = computeEnvelope({ axes, verdictAt: (index) => noise[index], x: 0, y: 1, margin: base.margin, bound: "max" });
        const document = envelopeDocument(envelope, {
          sweepId: "swp_test",
          name,
          specHash: "ab".repeat(32),
          axes,
          x: 0,
          y: 1,
          verdictRules: 2,
          tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1000, restitutionRel: 0.05 },
          damping: dampingOfGrid,
          friction: frictionOfGrid,
        });
        // Through JSON and back, as a client receives it.
        const parsed = envelopeDocumentSchema.safeParse(JSON.parse(JSON.stringify(document)));
        expect(parsed.success).toBe(true);
        const csv = envelopeCsv(document);
        expect(csv).toContain("contact.stiffness [N/m],dtS safe [s],dtS max limit [s],status\r\n");
        expect(csv).toContain(`"specHash":"${"ab".repeat(32)}"`);
        expect(csv).toContain("# verdictRules: 2");
        expect(csv).toContain('# contactEnd: "force-zero"');
        expect(csv).toContain('# damping: {"kind":"restitution","values":[{"model":"linear","restitution":0.8,"forceZero":{"dampingRatio":0.0743');
        expect(csv).toContain(`# friction: {"kind":"coulomb","model":"cundall-strack","coefficient":[0.4],"staticCoefficient":null,"stiffnessRatio":[${2 / 7}],"stiffnessNPerM":null,"dampingRatio":[0],"rollingResistance":[0]}`);
        expect(csv).toContain(`# margin: ${JSON.stringify(base.margin)}`);
        expect(csv.split("\r\n").filter((line) => line && !line.startsWith("#")).length).toBe(base.xs + 1);
      }),
      { numRuns: 100 },
    );
  });
});
