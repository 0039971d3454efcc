/**
 * Catalogue checks with friction (lib/catalogues/friction-check.ts): the friction columns of a
 * catalogue and their limits, the tangential stability of every frictional pair and of every object
 * on the floor, resting overlap, sliding, and the recommendation's largest k_t/k and substeps. Old
 * catalogues (no friction column) are pinned to the exact outputs they gave before friction existed.
 */
import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { checkSettingsSchema, checkSpec, pairMatrix, recommend } from "@/lib/catalogues/check";
import { pairContactTuning } from "@/lib/catalogues/contact-tuning";
import { CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { checkExportJson, frictionCsv, FRICTION_CSV_COLUMNS, pairMatrixCsv, recommendationCsv } from "@/lib/catalogues/exports";
import { parseCatalogueFile, type CatalogueObject } from "@/lib/catalogues/format";
import { catalogueHasFriction, frictionCheck, pairFrictionCoefficient } from "@/lib/catalogues/friction-check";
import { simulate } from "@/lib/physics/simulate";
import { cellCount, cellRange, expandAxes } from "@/lib/sweeps/grid";
import { sweepMeasuresRotation } from "@/lib/sweeps/results";
import { parseSweepSpec } from "@/lib/sweeps/spec";

const encode = (text: string) => new TextEncoder().encode(text);

/** Invented objects of the invented game "Lanternfall" (Tallowmere freight yard). */
const LANTERNFALL_CSV = [
  "name,mass_kg,radius_m,top_speed_m_per_s,restitution,group,friction,rolling_resistance",
  "ice puck,0.5,0.1,4,0.5,,0.1,",
  "loot chest,4,0.3,1,0.3,,0.6,0.02",
  "lantern,1,0.2,2,0.4,,,",
  "anvil,500,0.2,0.5,0.2,,0.3,",
  "",
].join("\r\n");

const SETTINGS = checkSettingsSchema.parse({ dtS: 1 / 60, substeps: 8, integrator: "symplectic-euler", stiffness: 1e5, margin: 0.5, frictionStiffnessRatio: 1, slopeAngleDeg: 20, offsets: [0, 0.6] });
const G = 9.81;

function lanternfall(): CatalogueObject[] {
  const parsed = parseCatalogueFile(encode(LANTERNFALL_CSV), "lanternfall.csv");
  expect(parsed.problems).toEqual([]);
  return parsed.objects as CatalogueObject[];
}

describe("friction columns", () => {
  it("read μ and μ_r where given and leave the fields out where a row leaves them empty", () => {
    const objects = lanternfall();
    expect(objects[0]).toEqual({ name: "ice puck", massKg: 0.5, radiusM: 0.1, topSpeedMPerS: 4, restitution: 0.5, group: null, friction: 0.1 });
    expect(objects[1]).toMatchObject({ friction: 0.6, rollingResistance: 0.02 });
    expect(Object.keys(objects[2])).not.toContain("friction");
    expect(catalogueHasFriction(objects)).toBe(true);
    expect(catalogueHasFriction([objects[2]])).toBe(false);
  });

  it("refuse a negative, NaN or too large μ and a too large μ_r, naming row and column with the limit", () => {
    const bad = LANTERNFALL_CSV.replace("ice puck,0.5,0.1,4,0.5,,0.1,", "ice puck,0.5,0.1,4,0.5,,-0.1,")
      .replace("loot chest,4,0.3,1,0.3,,0.6,0.02", "loot chest,4,0.3,1,0.3,,NaN,2")
      .replace("anvil,500,0.2,0.5,0.2,,0.3,", "anvil,500,0.2,0.5,0.2,,11,");
    const parsed = parseCatalogueFile(encode(bad), "bad.csv");
    expect(parsed.objects).toBeNull();
    expect(parsed.problems.map((problem) => `${problem.row}:${problem.column}`)).toEqual(["2:friction", "3:friction", "3:rolling_resistance", "5:friction"]);
    expect(parsed.problems[0].reason).toMatch(/^out of range: .*≥ 0/);
    expect(parsed.problems[1].reason).toMatch(/^not a number: "NaN"/);
    expect(parsed.problems[2].reason).toMatch(/^out of range: .*≤ 1/);
    expect(parsed.problems[3].reason).toMatch(/^out of range: .*≤ 10/);
  });

  it("refuse a JSON μ that is not a number, naming its row", () => {
    const parsed = parseCatalogueFile(encode(JSON.stringify([{ name: "puck", mass_kg: 1, radius_m: 0.1, top_speed_m_per_s: 1, restitution: 0.5, friction: true }, { name: "chest", mass_kg: 1, radius_m: 0.1, top_speed_m_per_s: 1, restitution: 0.5, friction: "rough" }])), "c.json");
    expect(parsed.problems.map((problem) => `${problem.row}:${problem.column}`)).toEqual(["1:friction", "2:friction"]);
  });

  it("refuse friction settings out of their limits (k_t/k of zero, a slope of 90°)", () => {
    const ratio = checkSettingsSchema.safeParse({ ...CRATESLIDE_SETTINGS, frictionStiffnessRatio: 0 });
    expect(ratio.success).toBe(false);
    expect(ratio.error?.issues[0].path).toEqual(["frictionStiffnessRatio"]);
    const slope = checkSettingsSchema.safeParse({ ...CRATESLIDE_SETTINGS, slopeAngleDeg: 90 });
    expect(slope.error?.issues[0].path).toEqual(["slopeAngleDeg"]);
  });
});

describe("a pair's friction coefficient", () => {
  it("is the geometric mean of two given, the one given when only one is, none when neither (common practice)", () => {
    const [puck, chest, lantern] = lanternfall();
    expect(pairFrictionCoefficient(puck, chest)).toBeCloseTo(Math.sqrt(0.06), 15);
    expect(pairFrictionCoefficient(puck, lantern)).toBe(0.1);
    expect(pairFrictionCoefficient(lantern, lantern)).toBeNull();
  });
});

describe("the friction check", () => {
  const objects = lanternfall();
  const recommendation = recommend(objects, SETTINGS);
  const friction = recommendation.friction;
  const h = 1 / 60 / 8;
  const phase = 2 * (1 - 0.5);
  const row = (name: string) => {
    const found = friction?.contacts.find((contact) => contact.contact === name);
    if (!found) throw new Error(`no row ${name}`);
    return found;
  };

  it("judges each tangential spring by ω_t·h with the effective tangential mass m/(1 + m·r²/I)", () => {
    expect(friction).toBeDefined();
    // Solid disc I = ½·m·r²: m/(1 + m·r²/I) = m/3 (Kleppner & Kolenkow, An Introduction to Mechanics, 2014, ch. 7, I of a uniform disc).
    const chest = row("loot chest on the floor");
    expect(chest.tangentialMassKg).toBeCloseTo(4 / 3, 12);
    // ω_t = √(k_t/m_t) = √(1e5 / (4/3)) = 273.86 rad/s; ω_t·h at h = 1/480 s (hand calculation from the definitions).
    expect(chest.tangentialOmegaH).toBeCloseTo(Math.sqrt(75_000) / 480, 12);
    expect(chest.tangentialStable).toBe(true);
    // Two pucks: 1/m_t = 1/m_t1 + 1/m_t2, so m_t = (0.5/3)/2 (springs in series).
    const pucks = row("ice puck × ice puck");
    expect(pucks.tangentialMassKg).toBeCloseTo(0.5 / 6, 12);
    expect(pucks.tangentialOmegaH).toBeCloseTo(Math.sqrt(1e5 / (0.5 / 6)) / 480, 12);
    expect(pucks.tangentialStable).toBe(false);
    // A pair where neither object gives friction or rolling resistance has no row.
    expect(friction?.contacts.some((contact) => contact.contact === "lantern × lantern")).toBe(false);
  });

  it("names the largest k_t/k that keeps every frictional contact within ω_t·h ≤ 2(1 − margin), and the contact deciding it", () => {
    // ω_t·h = √(r·k/m_t)·h ≤ φ  ⇔  r ≤ m_t·(φ/h)²/k; the lightest tangential mass decides: two pucks,
    // m_t = 0.5/6 kg, r = (0.5/6)·480²/1e5 = 0.192 (symplectic Euler bound ω·h < 2 for a harmonic
    // oscillator, Hairer, Lubich & Wanner, Geometric Numerical Integration, 2006, with the check's margin).
    expect(friction?.largestStiffnessRatioContact).toBe("ice puck × ice puck");
    expect(friction?.largestStiffnessRatio).toBeCloseTo(((0.5 / 6) * (phase / h) ** 2) / 1e5, 12);
    expect(friction?.largestStiffnessRatio).toBeCloseTo(0.192, 12);
    expect(row("loot chest on the floor").largestStiffnessRatio).toBeCloseTo(3.072, 12);
  });

  it("names the substeps that keep every pair stable: the tangential springs' and the normal springs' count, the larger", () => {
    // Tangential, at k_t/k = 1: n ≥ ω_t·dt/φ with ω_t = √(1e5/(0.5/6)) = 1095.4 rad/s → n = ⌈18.26⌉ = 19 (same bound).
    expect(friction?.tangentialSubsteps).toBe(Math.ceil(Math.sqrt(1e5 / (0.5 / 6)) / 60 / phase));
    expect(friction?.tangentialSubsteps).toBe(19);
    // Normal, at the game's stiffness: the lightest reduced mass, two pucks at m* = 0.25 kg, n ≥ √(1e5/0.25)/60 = 10.54 → 11.
    expect(recommendation.substeps).toBe(11);
    expect(friction?.substeps).toBe(19);
    expect(friction?.unstableContacts).toContain("ice puck × ice puck");
    expect(friction?.summary).toContain("0.192");
    expect(friction?.summary).toContain("raise the substeps to 19");
    // At the advised count every tangential spring is within the bound.
    const again = recommend(objects, { ...SETTINGS, substeps: 19 }).friction;
    expect(again?.unstableContacts).toEqual([]);
    expect(again?.contacts.every((contact) => contact.frictionCoefficient === null || contact.tangentialStable)).toBe(true);
    expect(recommend(objects, { ...SETTINGS, substeps: 18 }).friction?.unstableContacts).toContain("ice puck × ice puck");
  });

  it("judges resting overlap m·g/k against the overlap tolerance", () => {
    // Static equilibrium k·δ = m·g (Hooke's law; Kleppner & Kolenkow 2014, ch. 2, from memory for the chapter).
    const chest = row("loot chest on the floor");
    expect(chest.restingOverlapM).toBeCloseTo((4 * G) / 1e5, 15);
    expect(chest.allowedRestingOverlapM).toBeCloseTo(0.1 * 0.3, 15);
    expect(chest.restingWithinTolerance).toBe(true);
    // 500 kg on 1e5 N/m: 0.049 m, past 10 % of its 0.2 m radius.
    const anvil = row("anvil on the floor");
    expect(anvil.restingOverlapM).toBeCloseTo((500 * G) / 1e5, 15);
    expect(anvil.restingWithinTolerance).toBe(false);
    // A pair: the heavier object resting on the lighter, against the smaller radius.
    const onPuck = row("ice puck × anvil");
    expect(onPuck.restingOverlapM).toBeCloseTo((500 * G) / 1e5, 15);
    expect(onPuck.allowedRestingOverlapM).toBeCloseTo(0.01, 15);
    expect(friction?.sinkingContacts).toEqual(expect.arrayContaining(["anvil on the floor", "ice puck × anvil", "anvil × anvil"]));
    expect(friction?.details.some((line) => line.includes("rest deeper than the overlap tolerance"))).toBe(true);
  });

  it("gives the sliding angles, which objects hold on the game's slope, and the slide before rolling", () => {
    const chest = row("loot chest on the floor");
    // tan θ = μ for a body that cannot roll; tan θ = 3μ for a rolling solid disc (Kleppner & Kolenkow 2014, ch. 2 and 7).
    expect(chest.slidingAngleDeg).toBeCloseTo((Math.atan(0.6) * 180) / Math.PI, 12);
    expect(chest.slidingAngleDeg).toBeCloseTo(30.9638, 4);
    expect(chest.rollingSlipAngleDeg).toBeCloseTo((Math.atan(1.8) * 180) / Math.PI, 12);
    expect(chest.holdsOnSlope).toBe(true); // tan 20° = 0.364 ≤ 0.6
    expect(row("ice puck on the floor").holdsOnSlope).toBe(false); // 0.364 > 0.1
    expect(row("anvil on the floor").holdsOnSlope).toBe(false); // 0.364 > 0.3
    expect(friction?.details).toContain("On your 20° slope ice puck, anvil slide (tan θ > μ); they need μ ≥ 0.364 to hold.");
    // Launched at 1 m/s without spin: rolls at 2v0/3 after t* = v0/(3μg) (Kleppner & Kolenkow 2014, ch. 7, the sliding
    // bowling ball); the slide's length from the work of kinetic friction, (v0² − v*²)/(2μg), an independent route.
    expect(chest.rollingSpeedMPerS).toBeCloseTo(2 / 3, 12);
    expect(chest.slideTimeS).toBeCloseTo(1 / (3 * 0.6 * G), 12);
    expect(chest.slideDistanceM).toBeCloseTo((1 - 4 / 9) / (2 * 0.6 * G), 12);
    // Then rolling resistance μ_r = 0.02 stops it: the rolling kinetic energy ¾·m·v*² (translation plus ½·I·ω² of a solid
    // disc) is spent by the torque μ_r·r·m·g over the angle d/r (work–energy theorem), d = 3v*²/(4μ_r·g) = 1.699 m.
    expect(chest.rollingDistanceM).toBeCloseTo((3 * (4 / 9)) / (4 * 0.02 * G), 12);
    // Objects without μ_r have no rolling distance; pairs no floor quantities.
    expect(row("ice puck on the floor").rollingDistanceM).toBeNull();
    expect(row("ice puck × loot chest").slidingAngleDeg).toBeNull();
  });

  it("uses the engine's default k_t/k of 2/7 when the settings give none, and says so", () => {
    const { frictionStiffnessRatio: _ignored, ...rest } = SETTINGS;
    void _ignored;
    const check = frictionCheck(objects, rest, 11);
    expect(check?.stiffnessRatio).toBeCloseTo(2 / 7, 15);
    expect(check?.stiffnessRatioGiven).toBe(false);
    expect(check?.summary).toContain("(the default, 2/7)");
  });

  it("exports its rows as CSV and its block in the recommendation's CSV and JSON", () => {
    const csv = frictionCsv(recommendation) as string;
    const lines = csv.trimEnd().split("\r\n");
    expect(lines[0]).toBe(FRICTION_CSV_COLUMNS.join(","));
    expect(lines).toHaveLength(1 + (friction?.contacts.length ?? 0));
    const chestLine = lines.find((line) => line.startsWith("loot chest on the floor,floor,")) as string;
    expect(chestLine.split(",")[FRICTION_CSV_COLUMNS.indexOf("holds_on_slope")]).toBe("yes");
    const recommendationLines = recommendationCsv(SETTINGS, recommendation).split("\r\n");
    expect(recommendationLines.some((line) => line.startsWith("friction_largest_stiffness_ratio,0.192,"))).toBe(true);
    expect(recommendationLines.some((line) => line.startsWith("friction_substeps,19,"))).toBe(true);
    const json = JSON.parse(checkExportJson({ checkId: "chk_f", catalogue: { name: "Lanternfall", version: 1, contentHash: "h" }, settings: SETTINGS, matrix: pairMatrix(objects, SETTINGS, []), recommendation }));
    expect(json.recommendation.friction.largestStiffnessRatioContact).toBe("ice puck × ice puck");
  });

  it("runs the check's simulated cells with each pair's μ and μ_r; the rest of its spec is the frictionless check's", () => {
    const spec = checkSpec("Lanternfall", 1, objects, SETTINGS);
    const parsed = parseSweepSpec(spec);
    expect(parsed.ok ? [] : parsed.issues).toEqual([]);
    if (!parsed.ok) return;
    const pairAxis = parsed.spec.axes[0];
    const byName = new Map((pairAxis.pairs ?? []).map((pair) => [pair.name, pair]));
    // √(μ_A·μ_B) when both give μ (common practice), the one given when only one does, 0 when neither;
    // μ_r the larger given (ours), 0 when neither.
    expect(byName.get("ice puck × loot chest")).toMatchObject({ friction: Math.sqrt(0.1 * 0.6), rollingResistance: 0.02 });
    expect(byName.get("ice puck × lantern")).toMatchObject({ friction: 0.1, rollingResistance: 0 });
    expect(byName.get("lantern × lantern")).toMatchObject({ friction: 0, rollingResistance: 0 });
    expect(byName.get("loot chest × anvil")).toMatchObject({ friction: Math.sqrt(0.6 * 0.3), rollingResistance: 0.02 });
    // The check's k_t/k reaches every cell.
    expect(parsed.spec.scenario.contact.friction).toEqual({ coefficient: 0.1, stiffnessRatio: 1 });
    const withoutFriction = objects.map(({ friction: _f, rollingResistance: _r, ...rest }) => (void _f, void _r, rest));
    const frictionless = structuredClone(spec);
    delete (frictionless.scenario.contact as { friction?: unknown }).friction;
    for (const pair of frictionless.axes?.[0].pairs ?? []) {
      delete pair.friction;
      delete pair.rollingResistance;
    }
    expect(checkSpec("Lanternfall", 1, withoutFriction, SETTINGS)).toEqual(frictionless);

    // A glancing cell of ice puck × loot chest (offset 0.6): the engine runs it with μ = √0.06 and
    // the puck leaves spinning; the same cell of the frictionless check has no spin to report.
    const axes = expandAxes(parsed.spec);
    const glancing = cellRange(parsed.spec, axes, 0, cellCount(axes)).find((cell) => cell.axisValues[0] === "ice puck × loot chest" && cell.axisValues[2] === 0.6 && cell.axisValues[1] === 1);
    expect(glancing?.scenario.contact.friction).toEqual({ coefficient: Math.sqrt(0.06), stiffnessRatio: 1 });
    const run = simulate(glancing!.scenario);
    expect(Math.abs(run.metrics.reboundSpinRadPerS as number)).toBeGreaterThan(0);
    const plain = { ...glancing!.scenario, contact: { ...glancing!.scenario.contact, friction: undefined, rollingResistance: undefined } };
    expect(simulate(plain).metrics.reboundSpinRadPerS).toBeUndefined();
    expect(sweepMeasuresRotation(parsed.spec, axes)).toBe(true);
  });
});

describe("catalogues without friction", () => {
  // The Crateslide file as it was before catalogues had friction columns.
  const CSV = ["name,mass_kg,radius_m,top_speed_m_per_s,restitution,group", "crate,3,0.4,2.5,0.4,cargo", "coin,0.6,0.25,3,0.6,loot", "barrel,5,0.45,2,0.3,cargo", "slider puck,1.5,0.3,4,0.5,player", "bumper,2,0.35,3.5,0.8,loot", ""].join("\r\n");
  const sha = (text: string) => createHash("sha256").update(text).digest("hex");
  // SHA-256 of each output computed with the code of main at 0394d40, before friction columns existed.
  const PINNED: [Record<string, unknown>, Record<string, string>][] = [
    [{}, { objects: "e5c917e44742406008b7d2355fd2f81389b0e36ca4a7abf7dbc6591b30051745", settings: "f3c5829ca175b40acd31be525e07903c47c071ddcea720f16696548e8e336d45", spec: "19dab53fb2968ff60d351f57502abad2eb5dd117ea01c6b0306d6f38fdfee9a2", recommendation: "86f4f75bd45ffbd2e718960fc340297d2c1edcd31d1932cb97089adf26f09a27", csv: "1d18a28ad78590ce5d9f70fa0562b5c991c7e248c8ba4125dafca36f25b22e27", pairs: "c29e6a4d5a5a7be60dd596b7814fac6585b145dfd5fec1a8785802af9ba8a2d1", json: "8888d2598af5d556e40063f426dc7ae71a05149e3a30e7d32e8281e1832cb8a0" }],
    [{ substeps: 4 }, { objects: "e5c917e44742406008b7d2355fd2f81389b0e36ca4a7abf7dbc6591b30051745", settings: "70e1bca2a82120d7455c48bc2630387461e184f01d7065a41de0165bc12adf79", spec: "044c6b9672d15769697f0d14053e6eda734c51b143a158ca3a6c56ace2d04bdc", recommendation: "9eef0c3e53363396c4f2d3897061d1a52c3fdbaff91b2790c867224e013d6984", csv: "30166a93019f98a2ced4e02701357d06546790425b23d06add403d6bacc8542d", pairs: "c76233cdc8efc117eece57fca393ea4dcf3f4a039728f242192e1ec6158aae5d", json: "ebe62785b8ccc2dd3a88acd017c2c5787f1bc531e41ee504247f52e60f71526e" }],
    [{ contactModel: "hertz", stiffness: 100000000 }, { objects: "e5c917e44742406008b7d2355fd2f81389b0e36ca4a7abf7dbc6591b30051745", settings: "11ce1fba441f2e750db04c75b5591018433454ad2611b1faf15e54992974a5b1", spec: "3259c3a20029f1701c762237c8b572057a01957d4cf23f11297dfd61b724cacc", recommendation: "2a511b50a449c2c278d8993b1432f224aaafb5f9c204897406e02e0031b6f312", csv: "bb0f059b95856f7b540c97a109318dbfc73a95d46bbe9ff7bc4281f93bc5517e", pairs: "c7ac5e87971858276b5c4052c380811011aa4747729c80cc12336008b49ce185", json: "954e6b11847bfe98c372306a2239c96b678253903da37a41609a54002b194d50" }],
    [{ groupStiffness: { cargo: 2000000, loot: 500000, player: 1000000 } }, { objects: "e5c917e44742406008b7d2355fd2f81389b0e36ca4a7abf7dbc6591b30051745", settings: "7d9c7ffd6554a747620898b64611b2de997201e0fda228d2f00baa7543713bcc", spec: "13adbb33a56ad5de1c0e19645601349d70e9ab276ce172d9e6f6c26f400f6bbd", recommendation: "3a2a5adf42dbe1a5c30a866300eea2c3fa23a4a5f57bb6f66a1e5b87d4194e5f", csv: "c8909ae2c914f1a6c86c016cc7441e3bb7f47ae5a5107011f360b19df652f1a8", pairs: "ef30feede2a4e55ab5f927c5a5024f8d3c8a3d287c3c6c959bc1d4aaa73def7d", json: "e00437383e95dd47a8f539136fff10df27e2de74fd10b129c0e21ca0a6cf3e34" }],
  ];

  it.each(PINNED)("give exactly the objects, settings, spec, recommendation and exports they gave before (%j)", (variant, pinned) => {
    const objects = parseCatalogueFile(encode(CSV), "crateslide.csv").objects as CatalogueObject[];
    const settings = checkSettingsSchema.parse({ ...CRATESLIDE_SETTINGS, ...variant });
    const recommendation = recommend(objects, settings);
    expect(recommendation.friction).toBeUndefined();
    const matrix = pairMatrix(objects, settings, []);
    const json = checkExportJson({ checkId: "chk_pin", catalogue: { name: "Crateslide objects", version: 1, contentHash: "h" }, settings, matrix, recommendation, contacts: pairContactTuning(objects, settings, recommendation) });
    expect({
      objects: sha(JSON.stringify(objects)),
      settings: sha(JSON.stringify(settings)),
      spec: sha(JSON.stringify(checkSpec("Crateslide objects", 1, objects, settings))),
      recommendation: sha(JSON.stringify(recommendation)),
      csv: sha(recommendationCsv(settings, recommendation)),
      pairs: sha(pairMatrixCsv(matrix)),
      json: sha(json),
    }).toEqual(pinned);
    expect(frictionCsv(recommendation)).toBeNull();
  });
});
