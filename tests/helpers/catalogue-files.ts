/**
 * Invented objects of the invented game "Lanternfall", with friction (μ) and one rolling
 * resistance (μ_r): the catalogue file the friction checks of the API and the CLI report read.
 */
export const LANTERNFALL_FRICTION_CSV = [
  "name,mass_kg,radius_m,top_speed_m_per_s,restitution,group,friction,rolling_resistance",
  "ice puck,0.5,0.1,4,0.5,,0.1,",
  "loot chest,4,0.3,1,0.3,,0.6,0.02",
  "lantern,1,0.2,2,0.4,,,",
  "",
].join("\r\n");
