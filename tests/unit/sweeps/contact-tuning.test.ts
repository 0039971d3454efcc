/**
 * Contacts given as natural frequency and damping ratio for the pairing's effective mass: the
 * effective mass is the one the engine's contacts actually oscillate with (checked against the
 * engine's own contact duration), envelope rows carry the contact of their limit cell, and a
 * catalogue check's game settings follow its recommendation.
 */
import { describe, expect, it } from "vitest";
import { simulate, linearDampingRatioForRestitution, reducedMassKg } from "@/lib/physics";
import { naturalFrequencyHz } from "@/lib/physics/frequency";
import { checkSettingsSchema, recommend } from "@/lib/catalogues/check";
import { CRATESLIDE_CATALOGUE_CSV, CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { GameSettingsError, gameSettings, pairContactCsv, pairContactTuning } from "@/lib/catalogues/contact-tuning";
import { parseCatalogueFile, type CatalogueObject } from "@/lib/catalogues/format";
import { contactTuningCsv, contactTuningJson, scenarioContactTuning, sceneEffectiveMassKg, withContactTuning } from "@/lib/sweeps/contact-tuning";
import { computeEnvelope } from "@/lib/sweeps/envelope";
import { cellAt, cellIndex, expandAxes } from "@/lib/sweeps/grid";
import { parseSweepSpec } from "@/lib/sweeps/spec";
import type { Scenario } from "@/lib/physics/types";
import { puckPairSpec, parsedSpec } from "./fixtures";

const objects = parseCatalogueFile(new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV), "crateslide.csv").objects as CatalogueObject[];

describe("a scenario's contact as frequency and damping ratio", () => {
  it("uses the mass the engine's contact oscillates with: half a period of f_n is the engine's contact time", () => {
    // Undamped linear contact: contact time π/ω_n = 1/(2 f_n) (Rao, Mechanical Vibrations, 2011, ch. 2:
    // half a period of the undamped oscillator; Luding 2008, t_c = π/ω). Measured by the engine at a fine step.
    const spec = parsedSpec(puckPairSpec());
    const pair: Scenario = { ...spec.scenario, contact: { model: "linear", stiffness: 2e5, damping: { kind: "none" } }, dtS: 1e-6, substeps: 1, durationS: 0.02 };
    const wall: Scenario = { ...pair, scene: { kind: "wall", massKg: 0.3, radiusM: 0.04, speedMPerS: 2, angleDeg: 0, gapM: 0.001 } };
    for (const scenario of [pair, wall]) {
      const tuning = scenarioContactTuning(scenario);
      expect(tuning).not.toBeNull();
      const measured = simulate(scenario).metrics.contactDurationS as number;
      expect(measured * 2 * (tuning?.frequencyHz as number)).toBeCloseTo(1, 4);
    }
    expect(sceneEffectiveMassKg(pair)).toBeCloseTo(reducedMassKg(0.17, 0.4), 15); // m1m2/(m1+m2) (definition)
    expect(sceneEffectiveMassKg(wall)).toBe(0.3); // a static wall has infinite mass (definition)
  });

  it("gives a target restitution as the engine's damping ratio, and a coefficient as c/c_c", () => {
    const spec = parsedSpec(puckPairSpec());
    const restitution = scenarioContactTuning(spec.scenario);
    expect(restitution?.dampingRatio).toBe(linearDampingRatioForRestitution(0.8));
    const mStar = reducedMassKg(0.17, 0.4);
    const coefficient = scenarioContactTuning({ ...spec.scenario, contact: { model: "linear", stiffness: 2e5, damping: { kind: "coefficient", value: 10 } } });
    // ζ = c / (2√(k m*)) (Rao 2011 ch. 2).
    expect(coefficient?.dampingRatio).toBeCloseTo(10 / (2 * Math.sqrt(2e5 * mStar)), 14);
    // ω_n·h with h = dt/substeps = (1/240)/4.
    expect(coefficient?.phasePerSubstep).toBeCloseTo(Math.sqrt(2e5 / mStar) / 960, 12);
    expect(scenarioContactTuning({ ...spec.scenario, contact: { model: "hertz", stiffness: 1e8, damping: { kind: "none" } } })).toBeNull();
  });

  it("writes fixed-order JSON (the bytes JSON.stringify gives) and CSV fields", () => {
    const tuning = scenarioContactTuning(parsedSpec(puckPairSpec()).scenario);
    expect(JSON.parse(`{${contactTuningJson(tuning)}}`)).toEqual({ contact: tuning });
    expect(`{${contactTuningJson(tuning)}}`).toBe(JSON.stringify({ contact: tuning }));
    expect(contactTuningCsv(null)).toBe(",,,,,,"); // one empty field per column, comma-led
  });
});

describe("envelope rows", () => {
  it("carry the contact of the cell at their limit, null where there is none", () => {
    const spec = parsedSpec(puckPairSpec());
    const axes = expandAxes(spec);
    // Stable while stiffness × dt is small: an invented verdict pattern over the 5 × 3 grid.
    const verdictAt = (index: number) => (index % 3 <= 2 - Math.floor(index / 3 / 2) ? "stable" : "exploded") as "stable" | "exploded";
    const envelope = computeEnvelope({ axes, verdictAt, x: 0, y: 1, margin: 0, bound: "max" });
    const tuned = withContactTuning(envelope, spec, axes, { x: 0, y: 1 });
    expect(tuned.rows.length).toBe(5);
    tuned.rows.forEach((row, ix) => {
      if (row.yLimit === null) {
        expect(row.contact).toBeNull();
        return;
      }
      const iy = axes[1].values.indexOf(row.yLimit);
      const cell = cellAt(spec, axes, cellIndex(axes, [ix, iy]));
      expect(row.contact).toEqual(scenarioContactTuning(cell.scenario));
      expect(row.contact?.stiffnessNPerM).toBe(axes[0].values[ix]);
    });
    expect(tuned.rows.some((row) => row.contact !== null)).toBe(true);
  });

  it("with a margin, carry the contact of the row's last safe cell (the limit is off the grid), also on a three-axis sweep", () => {
    // A third axis: the limit's old lookup (indexOf the limit, −1) named the cell before the row's first, outside the grid for row 0.
    const spec = parseSweepSpec({ ...puckPairSpec(), axes: [...puckPairSpec().axes!, { parameter: "substeps", values: [1, 2] }] });
    if (!spec.ok) throw new Error(JSON.stringify(spec.issues));
    const axes = expandAxes(spec.spec);
    expect(axes.length).toBe(3);
    const envelope = computeEnvelope({ axes, verdictAt: () => "stable", x: 0, y: 1, margin: 0.2, bound: "max" });
    const tuned = withContactTuning(envelope, spec.spec, axes, { x: 0, y: 1 });
    tuned.rows.forEach((row, ix) => {
      expect(row.yLimit).not.toBe(row.safeY);
      const iy = axes[1].values.indexOf(row.safeY!);
      expect(row.contact).toEqual(scenarioContactTuning(cellAt(spec.spec, axes, cellIndex(axes, [ix, iy, 0])).scenario));
    });
  });
});

describe("catalogue pairs and game settings", () => {
  const settings = checkSettingsSchema.parse(CRATESLIDE_SETTINGS);
  const recommendation = recommend(objects, settings);

  it("puts the lightest pairing exactly at the allowed phase 2(1 − margin) at the recommended stiffness", () => {
    expect(recommendation.stiffness).not.toBeNull();
    const tuned = pairContactTuning(objects, settings, recommendation);
    expect(tuned.length).toBe(15); // 5 objects: 5·6/2 unordered pairs with themselves
    const lightest = tuned.find((entry) => entry.pair === recommendation.lightestPair);
    // Definition of the recommendation (docs/api.md): k = m*_min (2(1 − margin)/h)², so ω_n·h = 2(1 − margin).
    expect(lightest?.recommended?.phasePerSubstep).toBeCloseTo(2 * (1 - settings.margin), 12);
    for (const entry of tuned) {
      expect(entry.recommended?.phasePerSubstep).toBeLessThanOrEqual(2 * (1 - settings.margin) + 1e-12);
      expect(entry.checked.frequencyHz).toBeCloseTo(naturalFrequencyHz(settings.stiffness as number, entry.checked.effectiveMassKg), 9);
    }
    expect(pairContactCsv(tuned).split("\r\n")[0]).toBe(
      "pair,object_a,object_b,effective_mass_kg,stiffness_n_per_m,damping_ns_per_m,frequency_hz,damping_ratio,recommended_stiffness_n_per_m,recommended_damping_ns_per_m,recommended_frequency_hz",
    );
  });

  it("writes one game-settings document: frame rate, substeps, the stiffness and the lightest pairing's frequency", () => {
    const document = gameSettings({ checkId: "chk_x", catalogue: { name: "Crateslide objects", version: 1 }, objects, settings, recommendation, stiffness: "recommended" });
    expect(document.frameRateHz).toBeCloseTo(60, 12);
    expect(document.substeps).toBe(16);
    expect(document.contact.stiffnessNPerM).toBe(recommendation.stiffness);
    expect(document.contact.lightestPair).toBe(recommendation.lightestPair);
    expect(document.contact.effectiveMassKg).toBe(recommendation.lightestReducedMassKg);
    expect(document.pairs.every((pair) => pair.dampingRatio === linearDampingRatioForRestitution(pair.restitution as number))).toBe(true);
    // Both contact-end criteria: the force-zero damping above (Schwager & Pöschel 2007) and, for an engine
    // that does not clamp, the overlap-zero one, ζ = −ln e/√(π² + ln² e) (Luding 2008), c = 2ζ√(k·m*).
    expect(document.contactEnd).toBe("force-zero");
    for (const pair of document.pairs) {
      const logE = Math.log(pair.restitution as number);
      const zeta = -logE / Math.sqrt(Math.PI ** 2 + logE ** 2);
      expect(pair.overlapZero.dampingRatio).toBeCloseTo(zeta, 14);
      expect(pair.overlapZero.dampingNsPerM).toBeCloseTo(2 * zeta * Math.sqrt(pair.stiffnessNPerM * pair.effectiveMassKg), 9);
      if ((pair.restitution as number) < 1) expect(pair.overlapZero.dampingRatio).toBeLessThan(pair.dampingRatio); // the clamp ends the contact sooner: more damping for the same bounce
    }
    const hertz = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, contactModel: "hertz", stiffness: 1e8 });
    expect(() => gameSettings({ checkId: "chk_x", catalogue: { name: "c", version: 1 }, objects, settings: hertz, recommendation: recommend(objects, hertz), stiffness: "checked" })).toThrow(GameSettingsError);
  });
});

describe("docs/game-settings.md", () => {
  it("describes every field of the game-settings document and of a contact", async () => {
    const { readFileSync } = await import("node:fs");
    const doc = readFileSync(`${process.cwd()}/docs/game-settings.md`, "utf8");
    const settings = checkSettingsSchema.parse(CRATESLIDE_SETTINGS);
    const document = gameSettings({ checkId: "chk_x", catalogue: { name: "c", version: 1 }, objects, settings, recommendation: recommend(objects, settings), stiffness: "checked" });
    const fields = [
      ...Object.keys(document).filter((key) => typeof (document as unknown as Record<string, unknown>)[key] !== "object"),
      ...Object.keys(document.source).map((key) => `source.${key}`),
      ...Object.keys(document.contact).map((key) => `contact.${key}`),
      ...Object.keys(document.pairs[0]).map((key) => `pairs[].${key}`),
    ];
    const tableText = doc.split("## The game-settings document")[1];
    for (const field of fields) {
      const bare = field.replace(/^pairs\[\]\./, "");
      expect(tableText.includes(`\`${field}\``) || tableText.includes(`\`${bare}\``), field).toBe(true);
    }
    for (const key of Object.keys(scenarioContactTuning(parsedSpec(puckPairSpec()).scenario) ?? {})) expect(doc).toContain(`| \`${key}\` |`);
  });
});
