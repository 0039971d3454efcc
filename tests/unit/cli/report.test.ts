/** The client's pieces that decide exit codes and report bytes: --fail-on, the JUnit writer, the backoff. */
import { describe, expect, it } from "vitest";
import { backoffMs, DEFAULT_RETRY } from "@/cli/client";
import { buildReport, frictionLines, junitXml, parseFailOn, xmlText } from "@/cli/report";
import { checkSettingsSchema, recommend } from "@/lib/catalogues/check";
import { parseCatalogueFile, type CatalogueObject } from "@/lib/catalogues/format";
import { LANTERNFALL_FRICTION_CSV } from "../../helpers/catalogue-files";

describe("--fail-on", () => {
  it("takes a list of verdicts or none, and names a wrong one", () => {
    expect(parseFailOn("exploded, tunneled,exploded")).toEqual(["exploded", "tunneled"]);
    expect(parseFailOn("none")).toEqual([]);
    expect(() => parseFailOn("exploded,wobbly")).toThrow(/"wobbly" is not a verdict/);
  });

  it("decides the exit code: 1 only when a counted verdict occurs", () => {
    const cases = [
      { name: "crate × coin", verdict: "energy-drift" as const, reason: "restitution 0.7 exceeds the model's 0.4 by more than 0.1" },
      { name: "coin × coin", verdict: "stable" as const, reason: "" },
    ];
    const base = { kind: "catalogue-check" as const, id: "chk_a", sweepId: "swp_a", name: "n", status: "done", verdictCounts: {}, cases };
    expect(buildReport({ ...base, failOn: ["energy-drift"] }).exitCode).toBe(1);
    expect(buildReport({ ...base, failOn: ["exploded", "tunneled"] }).exitCode).toBe(0);
  });
});

describe("JUnit XML", () => {
  it("escapes the five XML entities and drops characters XML 1.0 forbids (W3C XML 1.0, §2.2 Characters, §2.4)", () => {
    expect(xmlText(`a<b>&"c'\u0001`)).toBe("a&lt;b&gt;&amp;&quot;c&apos;");
  });

  it("writes one test case per case, failures carrying verdict and reason, an object named like markup kept as text", () => {
    const report = buildReport({
      kind: "sweep",
      id: "swp_a",
      sweepId: "swp_a",
      name: "<crates & coins>",
      status: "done",
      failOn: ["exploded"],
      verdictCounts: {},
      cases: [
        { name: "cell 0: contact.stiffness=1000", verdict: "exploded", reason: "energy grew past 1000× its start" },
        { name: "cell 1: contact.stiffness=10", verdict: "stable", reason: "" },
        { name: "cell 2", verdict: null, reason: "" },
      ],
    });
    const xml = junitXml(report);
    expect(xml).toContain(`<testsuite name="kickdrift sweep &lt;crates &amp; coins&gt; (swp_a)" tests="3" failures="1" errors="0" skipped="1">`);
    expect(xml).toContain(`<failure message="exploded: energy grew past 1000× its start" type="exploded">`);
    expect(xml.match(/<testcase /g)?.length).toBe(3);
  });
});

describe("backoff", () => {
  it("doubles from the base delay up to the cap, with at most 20 % jitter", () => {
    const policy = { ...DEFAULT_RETRY, baseDelayMs: 500, maxDelayMs: 15_000 };
    expect([1, 2, 3, 4, 5, 6, 7].map((attempt) => backoffMs(policy, attempt, () => 0))).toEqual([500, 1000, 2000, 4000, 8000, 15_000, 15_000]);
    expect(backoffMs(policy, 1, () => 1)).toBe(600);
  });
});

describe("friction rows of a catalogue check", () => {

  it("print the summary, the largest k_t/k, the substeps and one line per contact, saying which are past the bound", () => {
    const objects = parseCatalogueFile(new TextEncoder().encode(LANTERNFALL_FRICTION_CSV), "lanternfall.csv").objects as CatalogueObject[];
    const settings = checkSettingsSchema.parse({ dtS: 1 / 60, substeps: 8, integrator: "symplectic-euler", stiffness: 1e5, margin: 0.5, frictionStiffnessRatio: 1, slopeAngleDeg: 20, offsets: [0] });
    const recommendation = recommend(objects, settings);
    const friction = recommendation.friction!;
    const lines = frictionLines({ margin: recommendation.margin, ...friction });
    expect(lines[0]).toBe(`Friction (k_t/k 1; gravity 9.81 m/s²; slope 20°): ${friction.summary}`);
    expect(lines[1]).toBe(`  largest k_t/k: ${Number(friction.largestStiffnessRatio!.toPrecision(3))} (${friction.largestStiffnessRatioContact} decides)`);
    expect(lines[2]).toBe(`  substeps keeping every pair stable: ${friction.substeps}`);
    expect(lines.length).toBe(3 + friction.contacts.length);
    // √(0.1·0.6) = 0.245 (common practice: the geometric mean); past the bound exactly where the check says so.
    const pair = lines.find((line) => line.startsWith("  ice puck × loot chest:"))!;
    expect(pair).toContain("μ 0.245 · ω_t·h ");
    const row = friction.contacts.find((contact) => contact.contact === "ice puck × loot chest")!;
    expect(pair).toContain(`${row.tangentialStable ? "within" : "PAST"} the bound 1 (k_t/k up to ${Number(row.largestStiffnessRatio.toPrecision(3))})`);
    expect(friction.unstableContacts.length).toBeGreaterThan(0);
    for (const contact of friction.unstableContacts) expect(lines.find((line) => line.startsWith(`  ${contact}:`))).toContain("PAST the bound");
    // On the floor: the sliding angle atan μ (Kleppner & Kolenkow 2014, ch. 2): atan 0.6 = 31.0°; launched at 1 m/s without spin it
    // rolls at 2v/3 = 0.667 m/s once the slide ends (Kleppner & Kolenkow 2014, ch. 7).
    const chest = lines.find((line) => line.startsWith("  loot chest on the floor:"))!;
    expect(chest).toContain("slides above 31°");
    expect(chest).toContain("holds on the slope");
    expect(chest).toMatch(/at top speed slides [\d.]+ s over [\d.]+ m, then rolls at 0\.667 m\/s · rolls [\d.]+ m before stopping$/);
    expect(lines.find((line) => line.startsWith("  ice puck on the floor:"))).toContain("SLIDES on the slope");
  });
});
