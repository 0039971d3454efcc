/**
 * Profiling driver for the contact-heavy scenes (not a benchmark): run under
 * `node --cpu-prof --cpu-prof-dir=DIR --import tsx tests/bench/profile-contact.ts pair|box1000|box4000`
 * and read the top functions by self time with tests/bench/profile-top.ts.
 */
import { pairGridScenarios, runPlain, settledHopper, settledHopperScenario } from "./contact-scenes";

const which = process.argv[2] ?? "pair";
if (which === "pair") {
  const scenarios = pairGridScenarios();
  let steps = 0;
  const started = performance.now();
  for (let round = 0; round < 30; round++) for (const scenario of scenarios) steps += runPlain(scenario);
  console.log(`pair grid plain: ${steps} steps in ${((performance.now() - started) / 1e3).toFixed(2)} s`);
} else {
  const count = which === "box4000" ? 4000 : 1000;
  const snapshot = settledHopper(count);
  const steps = Math.round(4e6 / count);
  const started = performance.now();
  runPlain(settledHopperScenario(snapshot, steps));
  console.log(`settled pile N=${count}: ${steps} steps in ${((performance.now() - started) / 1e3).toFixed(2)} s`);
}
