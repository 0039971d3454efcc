/**
 * Starting templates for the sweep builder: each answers one question a physics programmer asks
 * when tuning contacts, with game objects of our own invention. Every template is a complete, valid
 * spec (tests/unit/sweeps/templates.test.ts parses each one) and stays small enough to run in a few
 * seconds on the demo machine.
 *
 * Pure data: safe to import in the browser.
 */
import type { SweepSpecInput } from "./spec";

export interface SweepTemplate {
  /** Stable identifier for links and tests. */
  id: string;
  title: string;
  /** The one-line question the template answers. */
  question: string;
  spec: SweepSpecInput;
}

/** Cells a template may have at most, so the demo runs in seconds. */
export const TEMPLATE_MAX_CELLS = 4_000;

const HZ_30_S = 1 / 30;
const HZ_60_S = 1 / 60;
const HZ_120_S = 1 / 120;

export const SWEEP_TEMPLATES: readonly SweepTemplate[] = [
  {
    id: "frame-rate-stiffness",
    title: "Stiffness a frame rate can carry",
    question: "What is the largest contact stiffness that stays stable at 30, 60 and 120 Hz, with symplectic Euler and with velocity Verlet?",
    spec: {
      name: "Reedmarsh bumper boats: boat against the dock buoy, stiffness × frame step × integrator",
      scenario: {
        scene: {
          kind: "pair",
          massAKg: 40,
          massBKg: 120,
          radiusAM: 0.3,
          radiusBM: 0.45,
          speedAMPerS: 2,
          speedBMPerS: 0,
          offsetFraction: 0,
          gapM: 0.01,
        },
        contact: { model: "linear", stiffness: 10_000, damping: { kind: "restitution", value: 0.8 } },
        integrator: "symplectic-euler",
        dtS: HZ_60_S,
        substeps: 4,
        durationS: 2,
      },
      axes: [
        { parameter: "contact.stiffness", spacing: "log", from: 1_000, to: 1_000_000_000, count: 25 },
        { parameter: "dtS", values: [HZ_120_S, HZ_60_S, HZ_30_S] },
        { parameter: "integrator", values: ["symplectic-euler", "velocity-verlet"] },
      ],
    },
  },
  {
    id: "tunnelling-speed",
    title: "Speed at which small fast objects tunnel",
    question: "How fast can a small disc hit a wall before a frame step carries it through the wall without a contact?",
    spec: {
      name: "Flintcap slingshot: pebble against the fort wall, speed × frame step",
      scenario: {
        scene: { kind: "wall", massKg: 0.01, radiusM: 0.02, speedMPerS: 10, angleDeg: 0, gapM: 0.05 },
        contact: { model: "linear", stiffness: 10_000, damping: { kind: "restitution", value: 0.6 } },
        integrator: "symplectic-euler",
        dtS: HZ_60_S,
        substeps: 1,
        durationS: 0.5,
        // Half the radius: a pebble may squash visibly; the question here is passing through.
        tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.5, blowUpEnergyFactor: 1000 },
      },
      axes: [
        { parameter: "scene.speedMPerS", spacing: "log", from: 0.5, to: 200, count: 27 },
        { parameter: "dtS", spacing: "log", from: 1 / 4000, to: HZ_30_S, count: 12 },
      ],
    },
  },
  {
    id: "mass-ratio-penetration",
    title: "How mass ratio changes penetration",
    question: "When a light object strikes a much heavier one, how deep do they overlap, and how stiff must the contact be to keep it shallow?",
    spec: {
      name: "Larchpoint docks: barrel rolled into a cargo crate, mass ratio × stiffness",
      scenario: {
        scene: {
          kind: "pair",
          massAKg: 2,
          massBKg: 20,
          radiusAM: 0.25,
          radiusBM: 0.4,
          speedAMPerS: 3,
          speedBMPerS: 0,
          offsetFraction: 0,
          gapM: 0.05,
        },
        contact: { model: "linear", stiffness: 50_000, damping: { kind: "restitution", value: 0.5 } },
        integrator: "velocity-verlet",
        dtS: HZ_60_S,
        // Enough substeps that the stiff end stays resolved: the map then shows overlap, not blow-up.
        substeps: 16,
        durationS: 1,
      },
      axes: [
        { parameter: "scene.massRatio", spacing: "log", from: 0.01, to: 100, count: 17 },
        { parameter: "contact.stiffness", spacing: "log", from: 100, to: 10_000_000, count: 21 },
      ],
    },
  },
  {
    id: "ramp-creep",
    title: "Friction that holds a crate on a ramp",
    question: "How much friction holds a crate on a ramp without creeping, at our 60 Hz frame step, and does a stiffer tangential spring change the answer?",
    spec: {
      name: "Tallowmere freight: supply crate on the loading ramp, friction × ramp angle × tangential stiffness",
      scenario: {
        scene: { kind: "slope", massKg: 20, radiusM: 0.3, angleDeg: 20, speedMPerS: 0, spinRadPerS: 0, gravityMPerS2: 9.81, body: "crate" },
        // ω·h = √(k/m)·dt/substeps ≈ 1.0: the normal spring the studio ships, resolved but not by much.
        contact: {
          model: "linear",
          stiffness: 1_150_000,
          damping: { kind: "restitution", value: 0.2 },
          friction: { coefficient: 0.5, stiffnessRatio: 2 / 7, dampingRatio: 0.5 },
        },
        integrator: "symplectic-euler",
        dtS: HZ_60_S,
        substeps: 4,
        durationS: 2,
        tolerances: {
          energyDriftRel: 0.01,
          maxOverlapFraction: 0.1,
          blowUpEnergyFactor: 1000,
          // The crate rests on the ramp from the first step: its first contact is no impact to resolve.
          minStepsPerContact: 0,
          // The question is whether the crate walks (creep, a distance); a buzz below 5 cm/s that goes
          // nowhere is left to the stack template's jitter question.
          restSpeedMPerS: 0.05,
        },
      },
      axes: [
        { parameter: "contact.friction.coefficient", spacing: "linear", from: 0.1, to: 1, count: 10 },
        { parameter: "scene.angleDeg", spacing: "linear", from: 5, to: 45, count: 9 },
        // 2/7 and 1 bracket common practice; 3 is a tangential spring stiffer than the normal one.
        { parameter: "contact.friction.stiffnessRatio", values: [2 / 7, 1, 3] },
      ],
    },
  },
  {
    id: "stack-settle",
    title: "Tallest pile that settles",
    question: "What is the largest stack of chests that settles without jitter or sinking, and which contact stiffness carries it at 60 Hz?",
    spec: {
      name: "Gildhollow vault: loot chests piled on the vault floor, pile height × contact stiffness",
      scenario: {
        scene: { kind: "stack", count: 10, massKg: 2, radiusM: 0.25, gravityMPerS2: 9.81, perturbationFraction: 0.01 },
        contact: {
          model: "linear",
          stiffness: 100_000,
          damping: { kind: "restitution", value: 0.3 },
          friction: { coefficient: 0.5, stiffnessRatio: 2 / 7, dampingRatio: 0.5 },
        },
        integrator: "symplectic-euler",
        dtS: HZ_60_S,
        substeps: 8,
        durationS: 3,
      },
      axes: [
        { parameter: "scene.count", spacing: "linear", from: 1, to: 24, count: 24 },
        { parameter: "contact.stiffness", spacing: "log", from: 10_000, to: 1_000_000, count: 9 },
      ],
    },
  },
];

export function findTemplate(id: string): SweepTemplate | undefined {
  return SWEEP_TEMPLATES.find((template) => template.id === id);
}
