/** The command-line runner end to end: spawned as `npm run sweep` runs it (node --import tsx with the server-only hook). */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import Papa from "papaparse";

const workDir = mkdtempSync(path.join(tmpdir(), "kd-sweeps-cli-"));
afterAll(() => rmSync(workDir, { recursive: true, force: true }));

function runCli(args: string[]) {
  const result = spawnSync(process.execPath, ["--import", "tsx", "--import", "./scripts/server-only-hook.mjs", "scripts/sweep.ts", ...args], { cwd: process.cwd(), encoding: "utf8", timeout: 120_000 });
  return { code: result.status, stdout: result.stdout, stderr: result.stderr };
}

describe("npm run sweep", { timeout: 120_000 }, () => {
  const example = "examples/puckyard-air-hockey.json";

  it("runs an example spec, writes the results and prints the verdict counts", () => {
    const out = path.join(workDir, "puckyard.json");
    const run = runCli(["--spec", example, "--out", out, "--threads", "2"]);
    expect(run.stderr).toMatch(/108 cells on 2 thread/);
    expect(run.code).toBe(0);
    const document = JSON.parse(readFileSync(out, "utf8"));
    expect(document.cellCount).toBe(108); // 9 × 6 × 2 axis values in the example
    expect(document.cells).toHaveLength(108);
    const counts = document.verdictCounts as Record<string, number>;
    expect(Object.values(counts).reduce((sum, n) => sum + n, 0)).toBe(108);
    const summary = Object.entries(counts)
      .map(([verdict, n]) => `${verdict} ${n}`)
      .join(", ");
    expect(run.stdout).toContain(`cells 108: ${summary}`);
    expect(document.cells[5].parameters).toEqual({ "contact.stiffness": 1000, dtS: expect.any(Number), integrator: "velocity-verlet" });
  });

  it("writes byte-identical files for any thread count and chunk size", () => {
    const outOne = path.join(workDir, "one.json");
    const outTwo = path.join(workDir, "two.json");
    expect(runCli(["--spec", example, "--out", outOne, "--threads", "1", "--max-chunk-cells", "5", "--quiet"]).code).toBe(0);
    expect(runCli(["--spec", example, "--out", outTwo, "--threads", "2", "--chunk-ms", "5000", "--quiet"]).code).toBe(0);
    expect(readFileSync(outTwo)).toEqual(readFileSync(outOne));
  });

  it("writes CSV with --format csv", () => {
    const out = path.join(workDir, "rail.csv");
    const run = runCli(["--spec", "examples/bumper-lane-rail.json", "--out", out, "--format", "csv", "--threads", "1"]);
    expect(run.code).toBe(0);
    const rows = Papa.parse<string[]>(readFileSync(out, "utf8").trimEnd(), { newline: "\r\n" }).data;
    expect(rows).toHaveLength(1 + 48); // header + 8 × 6 cells
    expect(rows[0].slice(0, 4)).toEqual(["index", "scene.speedMPerS", "scene.angleDeg", "verdict"]);
  });

  it("prints the field errors of an invalid spec and exits 2", () => {
    const spec = JSON.parse(readFileSync(example, "utf8"));
    spec.scenario.scene.massAKg = -1;
    spec.axes[0].count = 100_000;
    spec.scenario.spin = 1;
    const file = path.join(workDir, "bad.json");
    writeFileSync(file, JSON.stringify(spec));
    const run = runCli(["--spec", file, "--out", path.join(workDir, "bad-out.json")]);
    expect(run.code).toBe(2);
    expect(run.stderr).toContain("scenario.scene.massAKg: mass of A must be > 0");
    expect(run.stderr).toContain("scenario.spin: unknown field");
    expect(run.stdout).toBe("");
  });

  it("exits 2 on bad usage", () => {
    expect(runCli(["--spec", example]).code).toBe(2);
    const threads = runCli(["--spec", example, "--out", path.join(workDir, "x.json"), "--threads", "0"]);
    expect(threads.code).toBe(2);
    expect(threads.stderr).toContain("--threads must be an integer ≥ 1");
    const notJson = path.join(workDir, "not.json");
    writeFileSync(notJson, "{ scenario: ");
    expect(runCli(["--spec", notJson, "--out", path.join(workDir, "y.json")]).stderr).toMatch(/not valid JSON/);
  });
});
