/**
 * Contact-heavy work against plain C (tests/bench/peers/contact-peer.c, built here with the
 * system's `cc -O2 -ffp-contract=off`; skipped, saying so, without a C compiler):
 *  1. the pair grid (stiffness 10…10⁵ N/m × dt 10⁻⁴…10⁻² s, 4 s simulated) with plain stepping:
 *     engine vs C peer vs a tight JavaScript loop of the same kernel, steps/s (target: engine ≥ 0.5× C);
 *  2. the same grid with the default (fast) stepping, counted as duration/dt steps per cell,
 *     against the C peer's plain steps/s (target: keep ≥ 5×);
 *  3. a settled pile in a box (N = 1,000 and 4,000, linear spring-dashpot, ω·dt = 0.2, gravity),
 *     body-steps/s, engine vs C peer (target ≥ 0.5×).
 * Rounds alternate the contenders; figures are medians. Each section first checks that engine
 * and peer end in the same state (bit for bit), so the comparison is of the same work. Beside the
 * elapsed time, each contender's CPU time is measured too (the engine's is the whole process's,
 * compiler and collector threads included): on a shared machine the elapsed times stretch with the
 * load, and the load average is printed with each section.
 */
import { availableParallelism, loadavg } from "node:os";
import { simulate } from "../../lib/physics/index";
import { createRunScratch, totalSubsteps } from "../../lib/physics/simulate";
import { buildScene } from "../../lib/physics/scenes";
import { linearDampingRatioForRestitution } from "../../lib/physics/damping";
import type { Scenario } from "../../lib/physics/types";
import { formatSi, table, type BenchModule } from "./bench-module";
import { buildPeer, ccVersion, PEER_CFLAGS, runBoxPeer, runPairPeer } from "./peers/c-peer";
import { pairGridScenarios, settledHopper, settledHopperScenario } from "./contact-scenes";

const PAIR_ROUNDS = 7;
/** Passes over the pair grid per contender and round (a pass of the C peer takes milliseconds). */
const PAIR_PASSES = 4;
/**
 * Passes of fast stepping per round: a pass takes a quarter of a millisecond, and on a machine
 * loaded several times over, a window that short measured the scheduler (one descheduling swung a
 * round's median tenfold while the process's CPU time stayed put).
 */
const FAST_PASSES = 40;
const BOX_ROUNDS = 7;
/** Untimed passes over the pair grid before the rounds (×10 for the far cheaper fast stepping). */
const WARM_UP_PASSES = 3;
const TARGET_PLAIN_VS_C = 0.5;
const TARGET_FAST_VS_C = 5;
const TARGET_BOX_VS_C = 0.5;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function secondsOf(fn: () => void): number {
  const started = process.hrtime.bigint();
  fn();
  return Number(process.hrtime.bigint() - started) / 1e9;
}

/** Elapsed and CPU seconds of fn (CPU: the whole process, every thread). */
function timesOf(fn: () => void): { s: number; cpuS: number } {
  const cpuStarted = process.cpuUsage();
  const s = secondsOf(fn);
  const cpu = process.cpuUsage(cpuStarted);
  return { s, cpuS: (cpu.user + cpu.system) / 1e6 };
}

function loadNote(): string {
  return `load average ${loadavg()
    .map((value) => value.toFixed(1))
    .join(" ")} on ${availableParallelism()} cores`;
}

/**
 * The pair kernel as a tight JavaScript loop (locals only, no bookkeeping): the same operations
 * in the same order as the engine and the C peer. Returns body A's final x (kept so the loop is not
 * optimised away).
 */
function tightPair(scenario: Scenario, steps: number): number {
  const { bodies } = buildScene(scenario.scene, scenario.seed);
  const h = scenario.dtS;
  const k = scenario.contact.stiffness ?? 0;
  const damping = scenario.contact.damping;
  const im0 = bodies.inverseMass[0];
  const im1 = bodies.inverseMass[1];
  const c = damping.kind === "restitution" && damping.value < 1 ? 2 * linearDampingRatioForRestitution(damping.value) * Math.sqrt((1 / (im0 + im1)) * k) : 0;
  const reach = bodies.radius[0] + bodies.radius[1];
  let x0 = bodies.x[0], y0 = bodies.y[0], vx0 = bodies.vx[0], vy0 = bodies.vy[0];
  let x1 = bodies.x[1], y1 = bodies.y[1], vx1 = bodies.vx[1], vy1 = bodies.vy[1];
  let fx0 = 0, fy0 = 0, fx1 = 0, fy1 = 0;
  for (let s = 0; s <= steps; s++) {
    if (s > 0) {
      const kick0 = h * im0;
      vx0 += kick0 * fx0;
      vy0 += kick0 * fy0;
      x0 += h * vx0;
      y0 += h * vy0;
      const kick1 = h * im1;
      vx1 += kick1 * fx1;
      vy1 += kick1 * fy1;
      x1 += h * vx1;
      y1 += h * vy1;
    }
    fx0 = fy0 = fx1 = fy1 = 0;
    const dx = x1 - x0;
    const dy = y1 - y0;
    const d2 = dx * dx + dy * dy;
    if (d2 < reach * reach && d2 > 0) {
      const d = Math.sqrt(d2);
      const nx = dx / d;
      const ny = dy / d;
      const force = k * (reach - d) + c * ((vx0 - vx1) * nx + (vy0 - vy1) * ny);
      if (force > 0) {
        fx0 = -force * nx;
        fy0 = -force * ny;
        fx1 = force * nx;
        fy1 = force * ny;
      }
    }
  }
  return x0;
}

async function pairSections(binary: string | null): Promise<void> {
  const scenarios = pairGridScenarios();
  // One scratch for all the cells, as a chunk of a sweep runs them (lib/sweeps/chunk-task.ts).
  const scratch = createRunScratch();
  const steps = scenarios.map((scenario) => simulate(scenario, { stepping: "plain" }, scratch).metrics.steps);
  const totalSteps = steps.reduce((sum, value) => sum + value, 0);
  const countedSteps = scenarios.reduce((sum, scenario) => sum + totalSubsteps(scenario), 0);
  console.log(`pair grid: ${scenarios.length} cells, ${formatSi(totalSteps)} steps integrated (${formatSi(countedSteps)} counted; exploded cells stop early)`);
  if (binary) {
    const c = runPairPeer(binary, scenarios, steps, 1).state;
    let identical = 0;
    scenarios.forEach((scenario, cell) => {
      const series = simulate(scenario, { stepping: "plain", maxSamples: 2 }).series!;
      const mass = scenario.scene.kind === "pair" ? [scenario.scene.massAKg, scenario.scene.massBKg] : [NaN, NaN];
      let same = true;
      for (let b = 0; b < 2; b++) {
        const o = cell * 8 + 4 * b;
        same &&= Object.is(series.bodies[b].xM[1], c[o]) && Object.is(series.bodies[b].yM[1], c[o + 1]) && Object.is(series.bodies[b].pxNs[1], mass[b] * c[o + 2]);
      }
      if (same) identical++;
    });
    console.log(`agreement: ${identical}/${scenarios.length} cells end in the C peer's state bit for bit`);
  }
  const engineS: number[] = [];
  const engineCpuS: number[] = [];
  const fastS: number[] = [];
  const fastCpuS: number[] = [];
  const peerS: number[] = [];
  const peerCpuS: number[] = [];
  const tightS: number[] = [];
  let sink = 0;
  // Warm-up, so that the medians time compiled code: on a loaded machine the JIT's background
  // compilation of a kernel can take longer than one pass (a fast pass takes well under a millisecond).
  for (let pass = 0; pass < WARM_UP_PASSES; pass++) {
    scenarios.forEach((scenario, cell) => {
      simulate(scenario, { stepping: "plain" }, scratch);
      sink += tightPair(scenario, steps[cell]);
    });
  }
  for (let pass = 0; pass < WARM_UP_PASSES * 10; pass++) scenarios.forEach((scenario) => simulate(scenario, {}, scratch));
  const passes = (fn: () => void) => () => {
    for (let pass = 0; pass < PAIR_PASSES; pass++) fn();
  };
  console.log(`pair grid rounds start: ${loadNote()}`);
  for (let round = 0; round < PAIR_ROUNDS; round++) {
    const engine = timesOf(passes(() => scenarios.forEach((scenario) => simulate(scenario, { stepping: "plain" }, scratch))));
    engineS.push(engine.s / PAIR_PASSES);
    engineCpuS.push(engine.cpuS / PAIR_PASSES);
    if (binary) {
      const peer = runPairPeer(binary, scenarios, steps, PAIR_PASSES);
      peerS.push(peer.ns.reduce((sum, ns) => sum + ns, 0) / 1e9 / PAIR_PASSES);
      peerCpuS.push(peer.cpuNs.reduce((sum, ns) => sum + ns, 0) / 1e9 / PAIR_PASSES);
    }
    tightS.push(secondsOf(passes(() => scenarios.forEach((scenario, cell) => (sink += tightPair(scenario, steps[cell]))))) / PAIR_PASSES);
    const fast = timesOf(() => {
      for (let pass = 0; pass < FAST_PASSES; pass++) scenarios.forEach((scenario) => simulate(scenario, {}, scratch));
    });
    fastS.push(fast.s / FAST_PASSES);
    fastCpuS.push(fast.cpuS / FAST_PASSES);
  }
  const engineRate = totalSteps / median(engineS);
  const tightRate = totalSteps / median(tightS);
  const fastRate = countedSteps / median(fastS);
  const rows: (string | number)[][] = [["pair grid, plain stepping", "median s", "steps/s", "× C peer", "target", "CPU s", "× C peer (CPU)"]];
  const peerRate = binary ? totalSteps / median(peerS) : NaN;
  const cpuRatio = binary ? (median(peerCpuS) / median(engineCpuS)).toFixed(2) : "-";
  rows.push(["engine", median(engineS).toFixed(4), formatSi(engineRate), binary ? (engineRate / peerRate).toFixed(2) : "-", `≥ ${TARGET_PLAIN_VS_C}`, median(engineCpuS).toFixed(4), cpuRatio]);
  if (binary) rows.push(["C peer", median(peerS).toFixed(4), formatSi(peerRate), "1.00", "", median(peerCpuS).toFixed(4), "1.00"]);
  rows.push(["tight JS", median(tightS).toFixed(4), formatSi(tightRate), binary ? (tightRate / peerRate).toFixed(2) : "-", "", "", ""]);
  const fastCpuRatio = binary ? (countedSteps / median(fastCpuS) / (totalSteps / median(peerCpuS))).toFixed(2) : "-";
  rows.push(["engine, fast stepping (counted steps)", median(fastS).toFixed(4), formatSi(fastRate), binary ? (fastRate / peerRate).toFixed(2) : "-", `≥ ${TARGET_FAST_VS_C}`, median(fastCpuS).toFixed(4), fastCpuRatio]);
  console.log(table(rows));
  console.log(`pair grid rounds end: ${loadNote()}`);
  // sink keeps the tight loop's result alive; printing it costs nothing.
  console.log(`engine plain / tight JS: ${(engineRate / tightRate).toFixed(2)} (tight JS checksum ${formatSi(sink)})`);
}

async function boxSection(binary: string | null, count: number, steps: number): Promise<void> {
  let snapshot: ReturnType<typeof settledHopper> | undefined;
  const settledIn = secondsOf(() => (snapshot = settledHopper(count)));
  const scenario = settledHopperScenario(snapshot!, steps);
  const probe = simulate(scenario, { stepping: "plain", maxSamples: 2 });
  const series = probe.series!;
  let agreement = "";
  if (binary) {
    const c = runBoxPeer(binary, scenario, probe.metrics.steps, 1).state;
    let identical = 0;
    series.bodies.forEach((track, i) => {
      const mass = snapshot!.bodies[i].massKg;
      if (Object.is(track.xM[1], c[4 * i]) && Object.is(track.yM[1], c[4 * i + 1]) && Object.is(track.pxNs[1], mass * c[4 * i + 2]) && Object.is(track.pyNs[1], mass * c[4 * i + 3])) identical++;
    });
    agreement = `, ${identical}/${count} bodies end in the C peer's state bit for bit`;
  }
  console.log(`settled pile N=${count}: settled in ${settledIn.toFixed(1)} s; ${steps} steps at ω·dt = 0.2, ${probe.metrics.contactSteps} with contact, max overlap ${(100 * probe.metrics.maxOverlapFraction).toFixed(2)}% of r${agreement}`);
  const engineS: number[] = [];
  const engineCpuS: number[] = [];
  const peerS: number[] = [];
  const peerCpuS: number[] = [];
  console.log(`rounds start: ${loadNote()}`);
  for (let round = 0; round < BOX_ROUNDS; round++) {
    const engine = timesOf(() => simulate(scenario, { stepping: "plain" }));
    engineS.push(engine.s);
    engineCpuS.push(engine.cpuS);
    if (binary) {
      const peer = runBoxPeer(binary, scenario, steps, 1);
      peerS.push(peer.ns[0] / 1e9);
      peerCpuS.push(peer.cpuNs[0] / 1e9);
    }
  }
  const bodySteps = count * steps;
  const engineRate = bodySteps / median(engineS);
  const peerRate = binary ? bodySteps / median(peerS) : NaN;
  const rows: (string | number)[][] = [[`settled pile N=${count}`, "median s", "body-steps/s", "× C peer", "target", "CPU s", "× C peer (CPU)"]];
  rows.push(["engine", median(engineS).toFixed(4), formatSi(engineRate), binary ? (engineRate / peerRate).toFixed(2) : "-", `≥ ${TARGET_BOX_VS_C}`, median(engineCpuS).toFixed(4), binary ? (median(peerCpuS) / median(engineCpuS)).toFixed(2) : "-"]);
  if (binary) rows.push(["C peer", median(peerS).toFixed(4), formatSi(peerRate), "1.00", "", median(peerCpuS).toFixed(4), "1.00"]);
  console.log(table(rows));
  console.log(`rounds end: ${loadNote()}`);
}

export const contactKernel: BenchModule = {
  id: "contact-kernel",
  title: "contact-heavy step kernel against plain C (pair grid plain and fast, settled pile N = 1,000 and 4,000)",
  async run() {
    const peer = buildPeer();
    if (peer.ok) console.log(`C peer: ${ccVersion()}, ${PEER_CFLAGS.join(" ")}`);
    else console.log(`C peer skipped: ${peer.why}; engine figures only`);
    const binary = peer.ok ? peer.binary : null;
    await pairSections(binary);
    await boxSection(binary, 1000, 1000);
    await boxSection(binary, 4000, 250);
  },
};
