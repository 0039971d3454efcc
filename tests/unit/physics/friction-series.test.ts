/**
 * What the cell page draws of a friction run: the slip speed series and the contacts' stick/slide
 * state per sample (the replay's marks). Invented prop: a "Puckworks" studio's bowling puck.
 */
import { describe, expect, it } from "vitest";
import { SERIES_MAX_CONTACTS } from "@/lib/physics/series";
import { simulate, slideToRoll, type ContactSpec, type SnapshotScene } from "@/lib/physics";
import { frictionContactsAt } from "@/lib/charts/replay";
import { scenario } from "./fixtures";

const G = 9.81;
const RADIUS = 0.05;
const MU = 0.3;

const contact: ContactSpec = { model: "linear", stiffness: 1e6, damping: { kind: "restitution", value: 0.3 }, friction: { coefficient: MU, stiffnessRatio: 2 / 7, dampingRatio: 0.3 } };

/** A puck launched at 2 m/s without spin along the floor y = 0 (wall 0). */
const floor: SnapshotScene = {
  kind: "snapshot",
  bodies: [{ xM: 0, yM: RADIUS, vxMPerS: 2, vyMPerS: 0, massKg: 1, radiusM: RADIUS }],
  walls: [{ normalX: 0, normalY: 1, offsetM: 0 }],
  gravityMPerS2: G,
  speedScale: 1,
};

describe("slip and stick/slide in a friction run's series", () => {
  const result = simulate(scenario(floor, contact, "velocity-verlet", 1e-4, 0.5), { maxSamples: 501 });
  const series = result.series!;
  // A solid disc sliding from v0 with no spin: the slip v − ω·r falls at μg + 2μg = 3μg until it
  // rolls at t* = v0/(3μg) (Kleppner & Kolenkow, An Introduction to Mechanics, 2nd ed. 2014, ch. 7).
  const { timeS: rollsAtS } = slideToRoll(2, 0, MU, G); // 0.2265 s

  it("records one slip speed per sample, falling as v0 − 3μg·t while sliding and 0 once rolling", () => {
    expect(series.slipMPerS).toHaveLength(series.tS.length);
    for (const t of [0.05, 0.1, 0.15, 0.2]) {
      const i = series.tS.findIndex((sampleT) => sampleT >= t);
      // 1 %: the spring's stretch to the Coulomb limit takes a few steps at the start.
      expect(Math.abs(series.slipMPerS![i] - (2 - 3 * MU * G * series.tS[i])), `t = ${series.tS[i]}`).toBeLessThan(0.01 * 2);
    }
    const rolling = series.tS.map((t, i) => [t, i] as const).filter(([t]) => t > rollsAtS + 0.01);
    expect(rolling.length).toBeGreaterThan(100);
    for (const [, i] of rolling) expect(series.slipMPerS![i]).toBe(0);
  });

  it("lists the puck's floor contact as sliding, then sticking, placed on the floor under the puck", () => {
    expect(series.frictionContacts).toHaveLength(series.tS.length);
    const early = series.tS.findIndex((t) => t >= 0.1);
    const late = series.tS.findIndex((t) => t >= 0.4);
    // (body 0, wall 0 written as −1, sliding 1) and later sticking.
    expect(series.frictionContacts![early]).toEqual([0, -1, 1]);
    expect(series.frictionContacts![late]).toEqual([0, -1, 0]);
    expect(series.slidingContacts![early]).toBe(1);
    expect(series.stickingContacts![late]).toBe(1);
    const [mark] = frictionContactsAt(series.bodies, [RADIUS], floor.walls!, series.frictionContacts![early], early);
    expect(mark.sliding).toBe(true);
    expect(mark.xM).toBe(series.bodies[0].xM[early]);
    expect(mark.yM).toBeCloseTo(0, 12); // the foot of the perpendicular on y = 0
  });

  it("places a contact between two discs at the radii's share of the line of centres, and caps the list", () => {
    const bodies = [
      { xM: [0], yM: [0] },
      { xM: [0.3], yM: [0.4] },
    ];
    // Radii 0.1 and 0.4 touching across 0.5 m: the point 1/5 of the way from the first centre.
    expect(frictionContactsAt(bodies, [0.1, 0.4], [], [0, 1, 0], 0)).toEqual([{ xM: expect.closeTo(0.06, 12), yM: expect.closeTo(0.08, 12), sliding: false }]);
  });

  it("lists at most SERIES_MAX_CONTACTS contacts per sample while the counts stay complete", () => {
    const tower = simulate(
      scenario({ kind: "stack", count: 300, massKg: 0.05, radiusM: 0.015, gravityMPerS2: G, perturbationFraction: 0 }, { ...contact, stiffness: 1e5 }, "velocity-verlet", 1e-4, 0.02),
      { maxSamples: 3 },
    ).series!;
    const last = tower.tS.length - 1;
    // 300 coins settling onto each other and the floor: more contacts than the list keeps.
    expect(tower.slidingContacts![last] + tower.stickingContacts![last]).toBeGreaterThan(SERIES_MAX_CONTACTS);
    expect(tower.frictionContacts![last]).toHaveLength(3 * SERIES_MAX_CONTACTS);
  });
});
