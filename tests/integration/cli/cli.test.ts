/**
 * The built command-line client (.build/cli/kickdrift.mjs, run by bin/kickdrift.mjs with plain
 * node) against the app's API served over HTTP in this process, with a queue runner: a catalogue
 * check that passes (exit 0), one with a pair at risk (exit 1, JUnit validated against the JUnit
 * XML schema), an invalid spec (exit 2 naming the field), a quote over the ceiling refused before
 * anything is submitted (exit 2), and the app stopped mid-wait (exit 3 after the retries).
 */
import { spawn, execFileSync } from "node:child_process";
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { validateXML } from "xmllint-wasm";
import type { Db } from "@/db/client";
import { sweeps } from "@/db/schema";
import { createApiToken } from "@/lib/auth/api-tokens";
import { QueueRunner } from "@/lib/queue/runner";
import { INSTABILITY_VERDICTS } from "@/lib/physics/types";
import { createChunkPool, type ChunkPool } from "@/lib/sweeps/pool";
import { closeTestDb, countRows, useFreshDb as openFreshTestDb } from "../../helpers/db";
import { startAppServer, type AppServer } from "../../helpers/app-server";
import { makeSweepStudio, type TestStudio } from "../sweeps/support";
import { puckPairSpec } from "../../unit/sweeps/fixtures";

const ROOT = process.cwd();
const BIN = path.join(ROOT, "bin", "kickdrift.mjs");
const XSD = readFileSync(path.join(ROOT, "cli", "schemas", "jenkins-junit.xsd"), "utf8");

let db: Db;
let pool: ChunkPool;
let runner: QueueRunner;
let app: AppServer;
let studio: TestStudio;
let token: string;
let work: string;

beforeAll(async () => {
  // The client as shipped: bundled by its build script, then run with plain node.
  execFileSync(process.execPath, [path.join(ROOT, "scripts", "build-cli.mjs")], { cwd: ROOT });
  db = await openFreshTestDb();
  pool = createChunkPool({ threads: 1, entry: "source" });
  runner = new QueueRunner({ db, pool, pollMs: 20 });
  await runner.start();
  studio = await makeSweepStudio("Gannet Test Yard");
  token = (await createApiToken(studio.studioId, studio.owner, { name: "ci", scopes: ["read", "write"] })).secret;
  app = await startAppServer();
  work = mkdtempSync(path.join(tmpdir(), "kd-cli-"));
}, 180_000); // a fresh database, a worker thread and (for the client) its bundle: slow on a loaded machine

afterAll(async () => {
  await app?.stop();
  await runner?.stop();
  await pool?.close();
  await closeTestDb();
  if (work) rmSync(work, { recursive: true, force: true });
});

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Runs the client asynchronously (the app answers from this same process), as CI would: CI=true, no terminal. */
function kickdrift(args: string[], options: { env?: Record<string, string>; onOutput?: (run: Run) => void } = {}): Promise<Run> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [BIN, "--poll", "50", "--retry-delay", "20", ...args], {
      cwd: work,
      env: { PATH: process.env.PATH ?? "", NODE_ENV: "test", CI: "true", KICKDRIFT_URL: app.url, KICKDRIFT_TOKEN: token, ...options.env },
      stdio: ["ignore", "pipe", "pipe"],
    });
    const run: Run = { code: null, stdout: "", stderr: "" };
    child.stdout.on("data", (chunk: Buffer) => {
      run.stdout += chunk.toString();
      options.onOutput?.(run);
    });
    child.stderr.on("data", (chunk: Buffer) => {
      run.stderr += chunk.toString();
    });
    child.on("error", reject);
    child.on("close", (code) => resolve({ ...run, code }));
  });
}

function file(name: string, content: string): string {
  const full = path.join(work, name);
  writeFileSync(full, content);
  return full;
}

// Two objects of an invented game, "Crateslide": a crate and a coin (three pairings).
const CATALOGUE = "name,mass_kg,radius_m,top_speed_m_per_s,restitution\r\ncrate,3,0.4,2.5,0.4\r\ncoin,0.6,0.25,3,0.6\r\n";
// Within the bound: ω·h ≤ 0.4 for the lightest pairing (coin × coin, m* = 0.3 kg) at h = 1/960 s:
// k ≤ 0.3·(0.4·960)² ≈ 44,000 N/m (docs/api.md, the recommendation's rule ω·h < 2 with margin 0.8).
const GENTLE = { dtS: 1 / 60, substeps: 16, integrator: "symplectic-euler", stiffness: 40_000, speedSteps: 2, offsets: [0] };
// Far past it: ω·h = √(5e7/0.3)/60 ≈ 215 ≫ 2 for coin × coin with one substep (symplectic Euler blows up).
const HARSH = { ...GENTLE, substeps: 1, stiffness: 50_000_000 };

/** The puck spec with a scenario this studio has not simulated yet (none of its cells cached). */
function uncachedPuckSpec() {
  const spec = puckPairSpec();
  spec.scenario.scene = { ...spec.scenario.scene, gapM: 0.012 } as typeof spec.scenario.scene;
  return spec;
}

async function validJunit(xml: string): Promise<{ valid: boolean; errors: readonly unknown[] }> {
  const result = await validateXML({ xml: [{ fileName: "report.xml", contents: xml }], schema: [XSD] });
  return { valid: result.valid, errors: result.errors };
}

// Each test runs the client two or three times, each a separate node process: minutes on a loaded machine.
describe("kickdrift check", { timeout: 180_000 }, () => {
  it("passes a catalogue within the bound: exit 0, one passing test case per pairing", async () => {
    const run = await kickdrift(["check", file("crateslide.csv", CATALOGUE), file("gentle.json", JSON.stringify(GENTLE)), "--junit", "gentle.xml", "--json", "gentle.json.out"]);
    expect(run.stderr).toMatch(/Quote: 6 cells/);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toMatch(/All 3 pairings pass/);
    const xml = readFileSync(path.join(work, "gentle.xml"), "utf8");
    expect((xml.match(/<testcase /g) ?? []).length).toBe(3);
    expect(xml).not.toContain("<failure");
    expect(await validJunit(xml)).toEqual({ valid: true, errors: [] });
    const report = JSON.parse(readFileSync(path.join(work, "gentle.json.out"), "utf8")) as { exitCode: number; catalogueId: string; cases: { name: string; verdict: string }[] };
    expect(report.exitCode).toBe(0);
    expect(report.catalogueId).toMatch(/^cat_/);
    expect(report.cases.map((entry) => entry.name)).toEqual(["crate × crate", "crate × coin", "coin × coin"]);
    // Within the bound no pairing fails the way the build counts by default; an accuracy verdict
    // (a rebound a little off its target) may show in the report without failing the build.
    for (const entry of report.cases) expect(INSTABILITY_VERDICTS).not.toContain(entry.verdict);
  });

  it("prints the friction rows of a catalogue whose objects give μ, puts them in the JSON report, and fetches them as CSV", async () => {
    // The same crate and coin with friction coefficients (invented): the pair's μ is √(0.5·0.3) = 0.387 (common practice: the geometric mean).
    const withFriction = "name,mass_kg,radius_m,top_speed_m_per_s,restitution,friction\r\ncrate,3,0.4,2.5,0.4,0.5\r\ncoin,0.6,0.25,3,0.6,0.3\r\n";
    const run = await kickdrift(["check", file("crateslide-mu.csv", withFriction), file("gentle-mu.json", JSON.stringify({ ...GENTLE, slopeAngleDeg: 20 })), "--json", "mu.json.out"]);
    expect(run.code, run.stderr).not.toBe(2);
    expect(run.stdout).toMatch(/^Friction \(k_t\/k 0\.286, the default 2\/7; gravity 9\.81 m\/s²; slope 20°\): /m);
    expect(run.stdout).toMatch(/^ {2}crate × coin: μ 0\.387 · ω_t·h [\d.e-]+ (within|PAST) the bound 0\.4 /m);
    // atan 0.3 = 16.7° < 20°: the coin slides on the slope; atan 0.5 = 26.6°: the crate holds (Kleppner & Kolenkow 2014, ch. 2).
    expect(run.stdout).toMatch(/^ {2}coin on the floor: μ 0\.3 .* slides above 16\.7°.* SLIDES on the slope/m);
    expect(run.stdout).toMatch(/^ {2}crate on the floor: μ 0\.5 .* slides above 26\.6°.* holds on the slope/m);
    const report = JSON.parse(readFileSync(path.join(work, "mu.json.out"), "utf8")) as { id: string; catalogueId: string; friction: { margin: number; contacts: { contact: string }[] } };
    expect(report.friction.margin).toBe(0.8);
    expect(report.friction.contacts.map((row) => row.contact)).toEqual(["crate × crate", "crate × coin", "coin × coin", "crate on the floor", "coin on the floor"]);
    const fetched = await kickdrift(["fetch", report.id, "--catalogue", report.catalogueId, "--out-dir", "out-mu"]);
    expect(fetched.code, fetched.stderr).toBe(0);
    expect(readFileSync(path.join(work, "out-mu", `${report.id}-friction.csv`), "utf8").split("\r\n").length).toBe(1 + 5 + 1);
  });

  it("fails a pair at risk: exit 1, the JUnit file valid against the JUnit XML schema with the verdict and reason", async () => {
    const run = await kickdrift(["check", file("crateslide.csv", CATALOGUE), file("harsh.json", JSON.stringify(HARSH)), "--junit", "reports/harsh.xml"]);
    expect(run.code, run.stderr).toBe(1);
    expect(run.stdout).toMatch(/at risk: coin × coin — exploded: /);
    const xml = readFileSync(path.join(work, "reports", "harsh.xml"), "utf8");
    expect(await validJunit(xml)).toEqual({ valid: true, errors: [] });
    expect(xml).toMatch(/<testcase classname="kickdrift\.catalogue-check\.chk_[^"]+" name="coin × coin"[^>]*>\s*<failure message="exploded: cell \d+: [^"]+" type="exploded"/);
    // The schema check is not a formality: a report missing a required attribute is refused.
    expect((await validJunit(xml.replace(/ name="coin × coin"/, ""))).valid).toBe(false);

    // --fail-on chooses what counts: counting only tunnelling, the same check passes.
    const checkId = /catalogue check (chk_[\w-]+)/.exec(run.stdout)?.[1] as string;
    const catalogueId = /catalogue (cat_[\w-]+)\)/.exec(run.stdout)?.[1] as string;
    const lenient = await kickdrift(["wait", checkId, "--catalogue", catalogueId, "--fail-on", "tunneled"]);
    expect(lenient.code, lenient.stderr).toBe(0);

    // fetch: the check's exports, contacts and game settings to files.
    const fetched = await kickdrift(["fetch", checkId, "--catalogue", catalogueId, "--out-dir", "out"]);
    expect(fetched.code, fetched.stderr).toBe(0);
    expect(readdirSync(path.join(work, "out")).sort()).toEqual([`${checkId}-check.json`, `${checkId}-contacts.csv`, `${checkId}-game-settings.json`, `${checkId}-pairs.csv`, `${checkId}-recommendation.csv`]);
    const settings = JSON.parse(readFileSync(path.join(work, "out", `${checkId}-game-settings.json`), "utf8")) as { frameRateHz: number; substeps: number; pairs: { pair: string; frequencyHz: number; worstVerdict: string }[] };
    expect(settings.frameRateHz).toBeCloseTo(60, 9);
    expect(settings.substeps).toBe(1);
    // f = √(k/m*)/2π for coin × coin: √(5e7/0.3)/2π (Rao, Mechanical Vibrations, 2011, ch. 2).
    expect(settings.pairs.find((pair) => pair.pair === "coin × coin")?.frequencyHz).toBeCloseTo(Math.sqrt(5e7 / 0.3) / (2 * Math.PI), 6);
    expect(settings.pairs.find((pair) => pair.pair === "coin × coin")?.worstVerdict).toBe("exploded");
  });
});

describe("kickdrift submit", { timeout: 180_000 }, () => {
  it("refuses an invalid spec with exit 2, naming the field, before calling the service", async () => {
    const spec = puckPairSpec();
    spec.scenario.dtS = -0.01;
    const before = await countRows(db, sweeps);
    const run = await kickdrift(["submit", file("bad-spec.json", JSON.stringify(spec))], { env: { KICKDRIFT_URL: "http://127.0.0.1:9" } });
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/invalid input: spec\.scenario\.dtS: /);
    expect(await countRows(db, sweeps)).toBe(before);
    const broken = await kickdrift(["submit", file("broken.json", "{ not json")]);
    expect(broken.code).toBe(2);
    expect(broken.stderr).toMatch(/invalid input: spec-file: .*is not JSON/);
  });

  it("prints the quote and refuses to submit over --ceiling (exit 2), submitting nothing", async () => {
    const before = await countRows(db, sweeps);
    const run = await kickdrift(["submit", file("puck.json", JSON.stringify(puckPairSpec())), "--ceiling", "0"]);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/Quote: 15 cells/);
    expect(run.stderr).toMatch(/invalid input: --ceiling: the quote's ceiling, .* exceeds the ceiling of 0 minutes .*nothing was submitted/);
    expect(await countRows(db, sweeps)).toBe(before);
  });

  it("submits, waits and fetches cells with contacts and the envelope", async () => {
    const run = await kickdrift(["submit", file("puck.json", JSON.stringify(puckPairSpec())), "--ceiling", "60", "--fail-on", "none", "--json", "puck-report.json"]);
    expect(run.code, run.stderr).toBe(0);
    const report = JSON.parse(readFileSync(path.join(work, "puck-report.json"), "utf8")) as { id: string; cases: unknown[] };
    expect(report.cases.length).toBe(15); // one test case per cell: 5 stiffnesses × 3 timesteps
    const fetched = await kickdrift(["fetch", report.id, "--out-dir", "puck"]);
    expect(fetched.code, fetched.stderr).toBe(0);
    const csv = readFileSync(path.join(work, "puck", `${report.id}-cells.csv`), "utf8").split("\r\n");
    expect(csv[0]).toMatch(/,contact_effective_mass_kg,contact_stiffness_n_per_m,contact_damping_ns_per_m,contact_frequency_hz,contact_damping_ratio,contact_phase_per_substep$/);
    expect(csv.length).toBe(17); // header, 15 cells, the empty string after the last CRLF
    const envelope = JSON.parse(readFileSync(path.join(work, "puck", `${report.id}-envelope.json`), "utf8")) as { envelope: { rows: { contact: unknown }[] } };
    expect(envelope.envelope.rows.length).toBe(5);
  });

  it("exits 3 after its retries when the app stops mid-wait", async () => {
    // No runner, and a spec not simulated before (a cached sweep would be done at once): the sweep stays queued, so the client is certainly still waiting when the app stops.
    await runner.stop();
    const submitted = await kickdrift(["submit", file("puck-wait.json", JSON.stringify(uncachedPuckSpec())), "--no-wait"]);
    expect(submitted.code, submitted.stderr).toBe(0);
    const sweepId = /Submitted sweep (swp_[\w-]+)/.exec(submitted.stdout)?.[1] as string;
    let stopping: Promise<void> | undefined;
    const run = await kickdrift(["--retries", "2", "wait", sweepId], {
      onOutput: (progress) => {
        if (!stopping && progress.stdout.includes(`sweep ${sweepId}: queued`)) stopping = app.stop();
      },
    });
    await stopping;
    expect(run.code).toBe(3);
    expect(run.stderr).toMatch(/retry 1 of 2/);
    expect(run.stderr).toMatch(/retry 2 of 2/);
    expect(run.stderr).toMatch(/service failure: GET \/studios\/.*ECONNREFUSED.*gave up after 2 retries/);
  });
});
