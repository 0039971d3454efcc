/**
 * The demo catalogue: the objects of "Crateslide", the invented arcade game of the invented demo
 * studio Gannet Yard Games (pucks knocking crates, coins and barrels across an ice deck).
 * Used by the demo seed, the docs and the tests.
 *
 * Pure data: safe to import in the browser.
 */
import type { CheckSettingsInput } from "./check";

export const CRATESLIDE_CATALOGUE_NAME = "Crateslide objects";

/**
 * The file as the studio would export it from its game data (CSV, comma-separated). Friction
 * coefficients of the ice deck (invented game values): the puck glides, crates and barrels grip a
 * little, the rubber bumper grips most; the barrel rolls, against a small rolling resistance.
 */
export const CRATESLIDE_CATALOGUE_CSV = [
  "name,mass_kg,radius_m,top_speed_m_per_s,restitution,group,friction,rolling_resistance",
  "crate,3,0.4,2.5,0.4,cargo,0.5,",
  "coin,0.6,0.25,3,0.6,loot,0.3,",
  "barrel,5,0.45,2,0.3,cargo,0.4,0.02",
  "slider puck,1.5,0.3,4,0.5,player,0.05,",
  "bumper,2,0.35,3.5,0.8,loot,0.8,",
  "",
].join("\r\n");

/** The game's settings: 60 Hz frames, 16 substeps, one stiffness, symplectic Euler. */
export const CRATESLIDE_SETTINGS: CheckSettingsInput = {
  dtS: 1 / 60,
  substeps: 16,
  integrator: "symplectic-euler",
  contactModel: "linear",
  stiffness: 1_500_000,
  damping: "catalogue",
  speedSteps: 6,
  offsets: [0, 0.6],
  margin: 0.8,
};
