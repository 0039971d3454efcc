/**
 * The advice every catalogue check ends in: settings that work (a stiffness range, substeps), a
 * per-group split, or a plain statement of which pair cannot be made stable at the frame rate and
 * the object change that would help. Figures worked by hand from the bound ω·h < 2 (Hairer, Lubich
 * & Wanner, Geometric Numerical Integration, 2nd ed., 2006, the harmonic oscillator) and the
 * undamped linear oscillator's amplitude δ = v/ω (Rao, Mechanical Vibrations, 5th ed., 2011, §2.2).
 */
import { describe, expect, it } from "vitest";
import { checkSettingsSchema, linearPairOverlapM, cataloguePairs, minStiffnessForOverlap, recommend, type CheckSettingsInput } from "@/lib/catalogues/check";
import { CRATESLIDE_CATALOGUE_CSV, CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { recommendationCsv } from "@/lib/catalogues/exports";
import { parseCatalogueFile, type CatalogueObject } from "@/lib/catalogues/format";
import { Xoshiro128StarStar } from "@/lib/physics/random";

const objects = parseCatalogueFile(new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV), "crateslide.csv").objects as CatalogueObject[];
const pellet: CatalogueObject = { name: "pellet", massKg: 0.01, radiusM: 0.01, topSpeedMPerS: 40, restitution: 0.5, group: null };
const undamped: CheckSettingsInput = { ...CRATESLIDE_SETTINGS, damping: "none" };
const advise = (catalogue: readonly CatalogueObject[], settings: CheckSettingsInput) => recommend(catalogue, checkSettingsSchema.parse(settings)).advice;

describe("the advice of a check", () => {
  // Undamped floors k = m*·v²/δ² (δ = 10 % of the smaller radius), worked by hand for all 15 pairs;
  // the highest is slider puck × bumper: m* = 1.5·2/3.5 = 6/7 kg, v = 4 + 3.5 = 7.5 m/s,
  // δ = 0.03 m, k = (6/7)·56.25/0.0009 = 53,571.4 N/m (puck × puck 53,333; crate × puck 46,944).
  // Caps k = m*·(0.4·60·n)² at the lightest m* = 0.3 kg (coin × coin): 172.8·n² N/m.
  it("gives the stiffness range at the game's substeps when one exists (undamped, worked by hand)", () => {
    const advice = advise(objects, { ...undamped, substeps: 20 });
    expect(advice.kind).toBe("stiffness");
    expect(advice.settings?.stiffnessMin).toBeCloseTo(337.5 / 0.0063, 6);
    // 172.8·20² = 69,120 N/m.
    expect(advice.settings?.stiffnessMax).toBeCloseTo(69_120, 6);
    expect(advice.settings?.substeps).toBe(20);
    expect(advice.summary).toBe("Set one stiffness between 53,600 and 69,100 N/m at your 20 substeps; 69,100 N/m, the stiffest, keeps overlaps shallowest.");
  });

  it("puts the floor where the damped overlap meets the tolerance exactly", () => {
    const settings = checkSettingsSchema.parse(CRATESLIDE_SETTINGS);
    for (const pair of cataloguePairs(objects, settings)) {
      const floor = minStiffnessForOverlap(pair, settings);
      // The defining property: at the floor the deepest overlap is the tolerance (10 % of the smaller radius).
      expect(linearPairOverlapM(pair, floor, settings)).toBeCloseTo(0.1 * Math.min(pair.a.radiusM, pair.b.radiusM), 12);
    }
  });

  it("raises the substeps when no stiffness fits at the game's own (undamped, worked by hand)", () => {
    const advice = advise(objects, undamped);
    expect(advice.kind).toBe("substeps");
    // 172.8·n² ≥ 53,571.4 needs n² ≥ 310.0, so n = 18 (17 gives 49,939): the cap 172.8·324 = 55,987.2 N/m.
    expect(advice.settings?.substeps).toBe(18);
    expect(advice.settings?.stiffnessMax).toBeCloseTo(55_987.2, 6);
    expect(advice.summary).toMatch(/^Raise the substeps from 16 to 18 and set one stiffness between 53,600 and 56,000 N\/m/);
    // At 16 substeps: 172.8·256 = 44,236.8 N/m.
    expect(advice.details[0]).toContain("coin × coin take at most 44,200 N/m, but slider puck × bumper needs at least 53,600 N/m");
  });

  it("says which pair cannot be made stable at this frame rate, why, with the numbers, and what to change", () => {
    const recommendation = recommend([pellet, ...objects], checkSettingsSchema.parse(undamped));
    const advice = recommendation.advice;
    expect(advice.kind).toBe("objects");
    expect(advice.settings).toBeNull();
    const pellets = advice.impossiblePairs.find((entry) => entry.pair === "pellet × pellet");
    // m* = 0.005 kg, v = 80 m/s, δ = 0.001 m: floor 0.005·80²/0.001² = 32,000,000 N/m; at 1,000 substeps
    // (h = 1/60,000 s) the cap is 0.005·(0.4·60,000)² = 2,880,000 N/m.
    expect(pellets?.reason).toContain("at 80 m/s it needs at least 32,000,000 N/m to stay within 0.001 m of overlap, but even at 1,000 substeps");
    expect(pellets?.reason).toContain("allows at most 2,880,000 N/m");
    // Highest closing speed: v·√(cap/floor) = 80·0.3 = 24 m/s, so each pellet at most 12 m/s.
    expect(pellets?.highestClosingSpeedMPerS).toBeCloseTo(24, 9);
    expect(advice.summary).toContain("pellet: lower its top speed from 40 to at most 12 m/s");
    expect(advice.summary).toMatch(/run the physics at \d[\d,]* Hz or more with 1,000 substeps/);
    // The old dead end is gone: no single stiffness, and still an answer.
    expect(recommendation.stiffness).toBeNull();
  });

  it("after the advised object change, the check advises settings that work", () => {
    const slowed = { ...pellet, topSpeedMPerS: 11.9 };
    const advice = advise([slowed, ...objects], undamped);
    expect(["stiffness", "substeps", "groups"]).toContain(advice.kind);
  });

  it("splits the stiffness by group when no single stiffness fits any substep count", () => {
    const anvil: CatalogueObject = { name: "anvil", massKg: 400, radiusM: 0.3, topSpeedMPerS: 20, restitution: 0.5, group: null };
    const feather: CatalogueObject = { name: "feather", massKg: 0.001, radiusM: 0.3, topSpeedMPerS: 1, restitution: 0.5, group: null };
    const advice = advise([anvil, feather], undamped);
    expect(advice.kind).toBe("groups");
    expect(advice.summary).toContain("put feather and anvil in different groups");
  });

  it("keeps the game's settings when they already hold", () => {
    const advice = advise(objects, { ...undamped, substeps: 20, stiffness: 60_000 });
    expect(advice.kind).toBe("keep");
    expect(advice.settings).toBeNull();
  });

  it("always ends in an answer, and the settings it advises hold when applied (random catalogues, both contact models)", () => {
    const generator = new Xoshiro128StarStar(2222);
    const random = () => generator.nextFloat();
    const kinds = new Map<string, number>();
    for (let trial = 0; trial < 120; trial++) {
      const count = 1 + Math.floor(random() * 5);
      const catalogue: CatalogueObject[] = Array.from({ length: count }, (_, i) => ({
        name: `object ${i + 1}`,
        massKg: 10 ** (-2 + random() * 4),
        radiusM: 10 ** (-2 + random() * 2),
        topSpeedMPerS: 10 ** (-1 + random() * 2.5),
        restitution: 0.2 + random() * 0.8,
        group: null,
      }));
      const settings: CheckSettingsInput = {
        ...CRATESLIDE_SETTINGS,
        contactModel: random() < 0.5 ? "linear" : "hertz",
        damping: random() < 0.5 ? "catalogue" : "none",
        substeps: 1 + Math.floor(random() * 20),
        stiffness: 10 ** (3 + random() * 5),
        margin: Math.round(random() * 90) / 100,
      };
      const advice = advise(catalogue, settings);
      expect(advice.summary.length).toBeGreaterThan(20);
      if (advice.settings) {
        const applied = advise(catalogue, { ...settings, substeps: advice.settings.substeps, stiffness: advice.settings.stiffness });
        expect(applied.kind, `trial ${trial}: ${advice.summary}`).toBe("keep");
      }
      if (advice.kind === "objects") expect(advice.impossiblePairs.length).toBeGreaterThan(0);
      kinds.set(advice.kind, (kinds.get(advice.kind) ?? 0) + 1);
    }
    // The trials reach every kind of answer but the per-group split (covered above).
    for (const kind of ["keep", "stiffness", "substeps", "objects"]) expect(kinds.get(kind), kind).toBeGreaterThan(0);
  });

  it("is in the recommendation export", () => {
    const settings = checkSettingsSchema.parse(undamped);
    const csv = recommendationCsv(settings, recommend(objects, settings));
    expect(csv).toContain('advice,substeps,,"Raise the substeps from 16 to 18');
    expect(csv).toMatch(/advised_substeps,18,,/);
    expect(csv).toContain("margin,0.8,fraction,");
  });
});
