/** docs/sweep-spec.md and examples/ stay in step with the schema. */
import { readFileSync, readdirSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { SPEC_LIMITS, SWEEPABLE_PARAMETERS, parseSweepSpec } from "../../../lib/sweeps/spec";
import { formatLimit } from "../../../lib/sweeps/parameters";

const doc = readFileSync(path.join(process.cwd(), "docs", "sweep-spec.md"), "utf8");
const exampleFiles = readdirSync(path.join(process.cwd(), "examples")).filter((file) => file.endsWith(".json"));

describe("docs/sweep-spec.md", () => {
  it("documents every sweepable parameter", () => {
    for (const parameter of SWEEPABLE_PARAMETERS) expect(doc).toContain(`| \`${parameter.path}\` |`);
  });

  it("states the limits the schema enforces", () => {
    for (const limit of [SPEC_LIMITS.maxCellsPerSweep, SPEC_LIMITS.maxStepsPerCell, SPEC_LIMITS.maxBodies, SPEC_LIMITS.maxSubsteps, SPEC_LIMITS.maxListValues]) {
      expect(doc).toContain(formatLimit(limit));
    }
  });

  it("shows example specs that are byte-for-byte the files in examples/", () => {
    const blocks = [...doc.matchAll(/<!-- example: (\S+) -->\n```json\n([\s\S]*?)\n```/g)];
    expect(blocks.length).toBeGreaterThan(0);
    for (const [, file, text] of blocks) {
      expect(`${text}\n`).toBe(readFileSync(path.join(process.cwd(), file), "utf8"));
    }
  });
});

describe("examples/", () => {
  it("holds at least three valid specs, each named in the docs", () => {
    expect(exampleFiles.length).toBeGreaterThanOrEqual(3);
    for (const file of exampleFiles) {
      const parsed = parseSweepSpec(JSON.parse(readFileSync(path.join(process.cwd(), "examples", file), "utf8")));
      expect(parsed.ok ? [] : parsed.issues).toEqual([]);
      expect(doc).toContain(`examples/${file}`);
    }
  });
});
