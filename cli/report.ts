/**
 * What a build reads after a wait: one test case per cell (a sweep) or per pairing (a catalogue
 * check), as JUnit XML (CI servers display it; validated against cli/schemas/jenkins-junit.xsd in
 * the tests) and as JSON.
 * A case fails when its verdict is one of the verdicts the build counts (--fail-on); the failure
 * carries the verdict as its type and the engine's reason as its message.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { INSTABILITY_VERDICTS, VERDICTS, type Verdict } from "../lib/physics/types";
import type { FrictionCheck, FrictionContactRow } from "../lib/catalogues/friction-check";

/**
 * What counts as at risk unless --fail-on says otherwise: the instability verdicts. Accuracy verdicts
 * (restitution-off, energy-drift, coarse-contact) are reported in the JUnit file but fail the build
 * only when named (`--fail-on exploded,step-unstable,tunneled,deep-overlap,restitution-off`).
 */
export const RISK_VERDICTS: readonly Verdict[] = INSTABILITY_VERDICTS;

export interface ReportCase {
  /** "cell 17: contact.stiffness=1000, dtS=0.001" or "crate × coin". */
  name: string;
  verdict: Verdict | null;
  reason: string;
  failed: boolean;
}

export interface Report {
  kind: "sweep" | "catalogue-check";
  id: string;
  sweepId: string;
  /** The check's catalogue (cat_…), for `kickdrift fetch <id> --catalogue`; absent for sweeps. */
  catalogueId?: string;
  name: string;
  status: string;
  failOn: Verdict[];
  verdictCounts: Record<string, number>;
  cases: ReportCase[];
  failures: number;
  exitCode: 0 | 1;
  /**
   * A catalogue check whose objects give μ or μ_r: its friction rows (the check's
   * recommendation.friction, docs/api.md) with the check's margin (the bound is ω_t·h ≤ 2(1 − margin)).
   */
  friction?: FrictionCheck & { margin: number };
}

/** Parses --fail-on: a comma-separated list of verdicts, or "none". */
export function parseFailOn(text: string): Verdict[] {
  if (text.trim() === "none") return [];
  const list = text.split(",").map((part) => part.trim()).filter(Boolean);
  for (const item of list) {
    if (!(VERDICTS as readonly string[]).includes(item)) throw new Error(`"${item}" is not a verdict; use a comma-separated list of ${VERDICTS.join(", ")}, or none`);
  }
  return [...new Set(list)] as Verdict[];
}

function num(value: number): string {
  return String(Number(value.toPrecision(3)));
}

/** One contact's friction row in words: μ, the tangential spring against its bound, resting overlap, and on the floor sliding and rolling. */
function frictionRowText(row: FrictionContactRow, phase: number): string {
  const parts: string[] = [];
  if (row.frictionCoefficient !== null) {
    parts.push(`μ ${num(row.frictionCoefficient)}`);
    if (row.frictionCoefficient > 0) parts.push(`ω_t·h ${num(row.tangentialOmegaH)} ${row.tangentialStable ? "within" : "PAST"} the bound ${num(phase)} (k_t/k up to ${num(row.largestStiffnessRatio)})`);
  }
  if (row.rollingResistance !== null) parts.push(`μ_r ${num(row.rollingResistance)}`);
  parts.push(`resting overlap ${num(row.restingOverlapM)} m ${row.restingWithinTolerance ? "within" : "PAST"} ${num(row.allowedRestingOverlapM)} m`);
  if (row.slidingAngleDeg !== null && row.rollingSlipAngleDeg !== null) parts.push(`slides above ${num(row.slidingAngleDeg)}°, a rolling disc slips above ${num(row.rollingSlipAngleDeg)}°`);
  if (row.holdsOnSlope !== null) parts.push(row.holdsOnSlope ? "holds on the slope" : "SLIDES on the slope");
  if (row.slideTimeS !== null && row.slideDistanceM !== null && row.rollingSpeedMPerS !== null) parts.push(`at top speed slides ${num(row.slideTimeS)} s over ${num(row.slideDistanceM)} m, then rolls at ${num(row.rollingSpeedMPerS)} m/s`);
  if (row.rollingDistanceM !== null) parts.push(`rolls ${num(row.rollingDistanceM)} m before stopping`);
  return `${row.contact}: ${parts.join(" · ")}`;
}

/**
 * The friction rows of a check as the client prints them: the summary, the largest k_t/k and the
 * substeps that keep every pair stable, then one line per contact (pairs, then objects on the floor).
 * The tangential bound is ω_t·h ≤ 2(1 − margin) with the check's margin, as the normal one.
 */
export function frictionLines(friction: FrictionCheck & { margin: number }): string[] {
  const phase = 2 * (1 - friction.margin);
  const lines = [`Friction (k_t/k ${num(friction.stiffnessRatio)}${friction.stiffnessRatioGiven ? "" : ", the default 2/7"}; gravity ${num(friction.gravityMPerS2)} m/s²${friction.slopeAngleDeg !== null ? `; slope ${num(friction.slopeAngleDeg)}°` : ""}): ${friction.summary}`];
  if (friction.largestStiffnessRatio !== null) lines.push(`  largest k_t/k: ${num(friction.largestStiffnessRatio)} (${friction.largestStiffnessRatioContact} decides)`);
  lines.push(`  substeps keeping every pair stable: ${friction.substeps === null ? "none within the limit" : friction.substeps}`);
  for (const row of friction.contacts) lines.push(`  ${frictionRowText(row, phase)}`);
  return lines;
}

export function buildReport(input: Omit<Report, "cases" | "failures" | "exitCode"> & { cases: Omit<ReportCase, "failed">[] }): Report {
  const cases = input.cases.map((entry) => ({ ...entry, failed: entry.verdict !== null && input.failOn.includes(entry.verdict) }));
  const failures = cases.filter((entry) => entry.failed).length;
  return { ...input, cases, failures, exitCode: failures > 0 ? 1 : 0 };
}

/** Text for an XML attribute or element: the five predefined entities escaped, characters XML 1.0 forbids dropped. */
export function xmlText(text: string): string {
  return text
    .replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]/g, "")
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&apos;");
}

/**
 * The JUnit XML document: <testsuites> with one <testsuite> and a <testcase> per case, written to
 * the schema of cli/schemas/jenkins-junit.xsd (the attributes and element order it allows; the
 * well-known builder packages add a `skipped` attribute to <testsuites> that it refuses).
 */
export function junitXml(report: Report): string {
  const className = `kickdrift.${report.kind}.${report.id}`;
  const skipped = report.cases.filter((entry) => entry.verdict === null).length;
  const counts = `tests="${report.cases.length}" failures="${report.failures}" errors="0"`;
  const lines = [
    `<?xml version="1.0" encoding="UTF-8"?>`,
    `<testsuites name="kickdrift" ${counts}>`,
    `  <testsuite name="${xmlText(`kickdrift ${report.kind} ${report.name} (${report.id})`)}" ${counts} skipped="${skipped}">`,
    `    <properties>`,
    `      <property name="kickdrift.id" value="${xmlText(report.id)}"/>`,
    `      <property name="kickdrift.sweep" value="${xmlText(report.sweepId)}"/>`,
    `      <property name="kickdrift.fail-on" value="${xmlText(report.failOn.join(",") || "none")}"/>`,
    `    </properties>`,
  ];
  for (const entry of report.cases) {
    const open = `    <testcase classname="${xmlText(className)}" name="${xmlText(entry.name)}">`;
    if (entry.failed) lines.push(open, `      <failure message="${xmlText(`${entry.verdict}: ${entry.reason}`)}" type="${xmlText(entry.verdict ?? "unknown")}">${xmlText(`${entry.verdict}: ${entry.reason}`)}</failure>`, `    </testcase>`);
    else if (entry.verdict === null) lines.push(open, `      <skipped/>`, `    </testcase>`);
    else lines.push(open, `      <system-out>${xmlText(`${entry.verdict}${entry.reason ? `: ${entry.reason}` : ""}`)}</system-out>`, `    </testcase>`);
  }
  lines.push(`  </testsuite>`, `</testsuites>`);
  return `${lines.join("\n")}\n`;
}

export function reportJson(report: Report): string {
  return `${JSON.stringify(report, null, 2)}\n`;
}

export function writeOut(file: string, text: string): void {
  mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  writeFileSync(file, text);
}
