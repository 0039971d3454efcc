/** The client's pieces that decide exit codes and report bytes: --fail-on, the JUnit writer, the backoff. */
import { describe, expect, it } from "vitest";
import { backoffMs, DEFAULT_RETRY } from "@/cli/client";
import { buildReport, junitXml, parseFailOn, xmlText } from "@/cli/report";

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
