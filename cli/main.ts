/**
 * kickdrift — the command-line client for build pipelines. Talks only to the public HTTP API
 * (KICKDRIFT_URL) with an API token (KICKDRIFT_TOKEN). Exit codes: 0 every counted case stable,
 * 1 something at risk (--fail-on chooses the verdicts that count), 2 invalid input (field and
 * reason printed), 3 service or network failure after the retries.
 *
 * The spec and settings schemas are the app's own zod schemas (lib/sweeps/spec.ts,
 * lib/catalogues/check.ts), so a file is refused here with the same field and message the API
 * would answer, before anything is sent.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { Command, CommanderError, InvalidArgumentError, Option } from "commander";
import cliProgress from "cli-progress";
import { checkSettingsSchema } from "../lib/catalogues/check";
import { parseCatalogueFile } from "../lib/catalogues/format";
import type { FrictionCheck } from "../lib/catalogues/friction-check";
import { parseSweepSpec } from "../lib/sweeps/spec";
import { ApiClient, DEFAULT_RETRY, EXIT, InputError, ServiceError, type RetryPolicy } from "./client";
import { RISK_VERDICTS, buildReport, frictionLines, junitXml, parseFailOn, reportJson, writeOut, type Report, type ReportCase } from "./report";
import type { Verdict } from "../lib/physics/types";

// ---------------------------------------------------------------------------
// Shapes of the API answers the client reads (docs/api.md).

interface Quote {
  cells: number;
  cachedCells: number;
  cellsToRun: number;
  /** The most the sweep can cost (billed compute ms); the studio is never billed above it. */
  ceilingMs: number;
  /** What the sweep is expected to cost (billed compute ms). */
  expectedMs: number;
  balanceMs: number;
  balanceAfterMs: number;
  warnings: string[];
}
interface SweepState {
  id: string;
  name: string;
  status: "queued" | "running" | "paused" | "done" | "failed" | "cancelled";
  reason: string | null;
  cells: number;
  cellsDone: number;
  verdictCounts: Record<string, number>;
  axes: { path: string }[];
}
interface CellRow {
  index: number;
  axisValues: (number | string)[];
  verdict: Verdict;
  reason: string;
}
interface PairRow {
  name: string;
  worstVerdict: Verdict | null;
  counts: Record<string, number>;
  cells: number;
  cellsDone: number;
  closingSpeedMPerS: number;
  highestStableSpeedMPerS: number | null;
  worstCellIndex: number | null;
}
interface CheckState {
  id: string;
  sweep: SweepState;
  matrix: { pairs: PairRow[]; atRisk: string[]; complete: boolean };
  recommendation?: { margin: number; friction?: FrictionCheck };
}

// ---------------------------------------------------------------------------
// Options shared by the commands

interface GlobalOptions {
  retries: number;
  retryDelay: number;
  poll: number;
  timeout: number;
  plain: boolean;
}
interface ReportOptions {
  failOn: Verdict[];
  junit?: string;
  json?: string;
}

function positiveNumber(name: string, integer = false) {
  return (value: string) => {
    const parsed = Number(value);
    if (value.trim() === "" || !Number.isFinite(parsed) || parsed < 0 || (integer && !Number.isInteger(parsed))) throw new InvalidArgumentError(`${name} must be ${integer ? "a whole number" : "a number"} ≥ 0; got "${value}"`);
    return parsed;
  };
}

function failOnOption(value: string): Verdict[] {
  try {
    return parseFailOn(value);
  } catch (error) {
    throw new InvalidArgumentError((error as Error).message);
  }
}

const out = (line: string) => process.stdout.write(`${line}\n`);
const note = (line: string) => process.stderr.write(`${line}\n`);

function readInput(file: string, field: string): Uint8Array {
  try {
    return readFileSync(file);
  } catch (error) {
    throw new InputError(field, `cannot read "${file}": ${(error as NodeJS.ErrnoException).code ?? (error as Error).message}`);
  }
}

function readJson(file: string, field: string): unknown {
  const text = new TextDecoder().decode(readInput(file, field));
  try {
    return JSON.parse(text);
  } catch (error) {
    throw new InputError(field, `"${file}" is not JSON: ${(error as Error).message}`);
  }
}

function client(globals: GlobalOptions): ApiClient {
  const retry: RetryPolicy = { ...DEFAULT_RETRY, retries: globals.retries, baseDelayMs: globals.retryDelay };
  return ApiClient.fromEnv(process.env, retry, (message) => note(`kickdrift: ${message}`));
}

async function studioOf(api: ApiClient): Promise<string> {
  const { token } = await api.json<{ token: { studioId: string; scopes: string[] } }>("GET", "/token");
  return token.studioId;
}

const minutes = (ms: number) => (ms / 60_000).toFixed(2);

function printQuote(quote: Quote): void {
  note(
    `Quote: ${quote.cells} cells (${quote.cachedCells} from the studio's stored results, ${quote.cellsToRun} to run); ` +
      `expected ${minutes(quote.expectedMs)} compute minutes (${quote.expectedMs} ms), at most ${minutes(quote.ceilingMs)} (${quote.ceilingMs} ms, the ceiling); ` +
      `balance ${minutes(quote.balanceMs)} → ${minutes(quote.balanceAfterMs)} minutes after.`,
  );
  for (const warning of quote.warnings ?? []) note(`Quote warning: ${warning}`);
}

/**
 * Refuses, before anything is submitted, a quote whose ceiling (the most the sweep can cost) exceeds
 * --ceiling (compute minutes): the build's budget holds whatever the cells turn out to cost.
 */
function guardCeiling(quote: Quote, ceilingMinutes: number | undefined): void {
  if (ceilingMinutes === undefined) return;
  const ceilingMs = Math.floor(ceilingMinutes * 60_000);
  if (quote.ceilingMs > ceilingMs)
    throw new InputError("--ceiling", `the quote's ceiling, ${minutes(quote.ceilingMs)} compute minutes (${quote.ceilingMs} ms), exceeds the ceiling of ${ceilingMinutes} minutes (${ceilingMs} ms); nothing was submitted`);
}

// ---------------------------------------------------------------------------
// Waiting

const FINISHED = new Set(["done", "failed", "cancelled"]);

async function waitForSweep(api: ApiClient, studioId: string, sweepId: string, globals: GlobalOptions): Promise<SweepState> {
  const bar = !globals.plain && process.stderr.isTTY && !process.env.CI ? new cliProgress.SingleBar({ format: "{bar} {percentage}% | {value}/{total} cells | {status}", stream: process.stderr, hideCursor: true }, cliProgress.Presets.shades_classic) : null;
  const deadline = Date.now() + globals.timeout * 1000;
  let lastLine = "";
  let started = false;
  try {
    for (;;) {
      const { sweep } = await api.json<{ sweep: SweepState }>("GET", `/studios/${studioId}/sweeps/${sweepId}`, { notFoundField: "id" });
      const status = sweep.reason ? `${sweep.status} (${sweep.reason})` : sweep.status;
      if (bar) {
        if (!started) bar.start(sweep.cells, sweep.cellsDone, { status });
        else bar.update(sweep.cellsDone, { status });
        started = true;
      } else {
        const line = `sweep ${sweep.id}: ${status}, ${sweep.cellsDone}/${sweep.cells} cells (${Math.floor((100 * sweep.cellsDone) / Math.max(1, sweep.cells))} %)`;
        if (line !== lastLine) out(line);
        lastLine = line;
      }
      if (FINISHED.has(sweep.status)) {
        if (sweep.status !== "done") throw new ServiceError(`sweep ${sweep.id} ended ${sweep.status}${sweep.reason ? `: ${sweep.reason}` : ""}`);
        return sweep;
      }
      if (Date.now() > deadline) throw new ServiceError(`sweep ${sweep.id} is still ${status} after ${globals.timeout} s (--timeout)`);
      await new Promise((resolve) => setTimeout(resolve, globals.poll));
    }
  } finally {
    bar?.stop();
  }
}

function cellName(cell: CellRow, axes: { path: string }[]): string {
  return `cell ${cell.index}: ${cell.axisValues.map((value, i) => `${axes[i]?.path ?? `axis ${i}`}=${value}`).join(", ")}`;
}

async function sweepCells(api: ApiClient, studioId: string, sweepId: string): Promise<CellRow[]> {
  return (await api.json<{ cells: CellRow[] }>("GET", `/studios/${studioId}/sweeps/${sweepId}/cells`)).cells;
}

async function sweepReport(api: ApiClient, studioId: string, sweep: SweepState, failOn: Verdict[]): Promise<Report> {
  const cells = await sweepCells(api, studioId, sweep.id);
  return buildReport({
    kind: "sweep",
    id: sweep.id,
    sweepId: sweep.id,
    name: sweep.name,
    status: sweep.status,
    failOn,
    verdictCounts: sweep.verdictCounts,
    cases: cells.map((cell): Omit<ReportCase, "failed"> => ({ name: cellName(cell, sweep.axes), verdict: cell.verdict, reason: cell.reason })),
  });
}

async function checkReport(api: ApiClient, studioId: string, catalogueId: string, checkId: string, failOn: Verdict[]): Promise<Report> {
  const { check } = await api.json<{ check: CheckState }>("GET", `/studios/${studioId}/catalogues/${catalogueId}/checks/${checkId}`, { notFoundField: "id" });
  const cells = new Map((await sweepCells(api, studioId, check.sweep.id)).map((cell) => [cell.index, cell]));
  return buildReport({
    kind: "catalogue-check",
    id: check.id,
    sweepId: check.sweep.id,
    catalogueId,
    name: check.sweep.name,
    status: check.sweep.status,
    failOn,
    verdictCounts: check.sweep.verdictCounts,
    ...(check.recommendation?.friction ? { friction: { margin: check.recommendation.margin, ...check.recommendation.friction } } : {}),
    cases: check.matrix.pairs.map((pair): Omit<ReportCase, "failed"> => {
      const worst = pair.worstCellIndex === null ? undefined : cells.get(pair.worstCellIndex);
      const notStable = pair.cellsDone - (pair.counts.stable ?? 0);
      const speeds = pair.highestStableSpeedMPerS === null ? "" : `; stable up to ${pair.highestStableSpeedMPerS} of ${pair.closingSpeedMPerS} m/s closing speed`;
      return {
        name: pair.name,
        verdict: pair.worstVerdict,
        reason: pair.worstVerdict === "stable" ? `${pair.cellsDone} cells stable` : `${worst ? `cell ${worst.index}: ${worst.reason}` : "no cell done"} (${notStable} of ${pair.cellsDone} cells not stable${speeds})`,
      };
    }),
  });
}

function finish(report: Report, options: ReportOptions): number {
  if (options.junit) writeOut(options.junit, junitXml(report));
  if (options.json) writeOut(options.json, reportJson(report));
  const counts = Object.entries(report.verdictCounts)
    .filter(([, n]) => n > 0)
    .map(([verdict, n]) => `${verdict} ${n}`)
    .join(", ");
  out(`${report.kind} ${report.id} ${report.status}: ${counts || "no cells"}`);
  if (report.friction) for (const line of frictionLines(report.friction)) out(line);
  for (const entry of report.cases.filter((c) => c.failed).slice(0, 20)) out(`  at risk: ${entry.name} — ${entry.verdict}: ${entry.reason}`);
  if (report.failures > 20) out(`  … and ${report.failures - 20} more (see the JUnit or JSON report)`);
  out(report.failures > 0 ? `${report.failures} of ${report.cases.length} ${report.kind === "sweep" ? "cells" : "pairings"} at risk (counting ${report.failOn.join(", ") || "none"}).` : `All ${report.cases.length} ${report.kind === "sweep" ? "cells" : "pairings"} pass (counting ${report.failOn.join(", ") || "none"}).`);
  return report.exitCode;
}

// ---------------------------------------------------------------------------
// Commands

async function submitCommand(specFile: string, options: ReportOptions & { name?: string; ceiling?: number; wait: boolean }, globals: GlobalOptions): Promise<number> {
  const raw = readJson(specFile, "spec-file");
  const parsed = parseSweepSpec(raw);
  if (!parsed.ok) {
    const [first, ...rest] = parsed.issues;
    throw new InputError(`spec.${first.field}`, `${first.message}${rest.map((issue) => `\n  spec.${issue.field}: ${issue.message}`).join("")}`);
  }
  const api = client(globals);
  const studioId = await studioOf(api);
  const { quote } = await api.json<{ quote: Quote }>("POST", `/studios/${studioId}/quotes`, { json: { spec: raw } });
  printQuote(quote);
  guardCeiling(quote, options.ceiling);
  const { sweep } = await api.json<{ sweep: SweepState }>("POST", `/studios/${studioId}/sweeps`, {
    json: { spec: raw, ...(options.name ? { name: options.name } : {}), acceptedQuoteMs: quote.ceilingMs },
  });
  out(`Submitted sweep ${sweep.id} (${sweep.cells} cells).`);
  if (!options.wait) return EXIT.stable;
  return finish(await sweepReport(api, studioId, await waitForSweep(api, studioId, sweep.id, globals), options.failOn), options);
}

async function checkCommand(catalogueFile: string, settingsFile: string, options: ReportOptions & { catalogueName?: string; ceiling?: number; wait: boolean }, globals: GlobalOptions): Promise<number> {
  const bytes = readInput(catalogueFile, "catalogue-file");
  const fileName = path.basename(catalogueFile);
  const catalogue = parseCatalogueFile(bytes, fileName);
  if (catalogue.problems.length > 0) {
    const [first, ...rest] = catalogue.problems.map((problem) => ({ field: `catalogue-file${problem.row !== null ? `.row ${problem.row}` : ""}${problem.column !== null ? `.${problem.column}` : ""}`, reason: problem.reason }));
    throw new InputError(first.field, `${first.reason}${rest.map((p) => `\n  ${p.field}: ${p.reason}`).join("")}`);
  }
  const rawSettings = readJson(settingsFile, "settings-file");
  const settings = checkSettingsSchema.safeParse(rawSettings);
  if (!settings.success) {
    const [first, ...rest] = settings.error.issues.map((issue) => ({ field: ["settings", ...issue.path.map(String)].join("."), reason: issue.message }));
    throw new InputError(first.field, `${first.reason}${rest.map((p) => `\n  ${p.field}: ${p.reason}`).join("")}`);
  }
  const api = client(globals);
  const studioId = await studioOf(api);
  const form = new FormData();
  form.set("file", new Blob([bytes as BlobPart], { type: fileName.toLowerCase().endsWith(".json") ? "application/json" : "text/csv" }), fileName);
  form.set("name", options.catalogueName ?? fileName.replace(/\.[^.]+$/, ""));
  const uploaded = await api.json<{ catalogue: { id: string; name: string; version: number } }>("POST", `/studios/${studioId}/catalogues`, { form });
  note(`Catalogue "${uploaded.catalogue.name}" v${uploaded.catalogue.version} (${uploaded.catalogue.id}).`);
  const base = `/studios/${studioId}/catalogues/${uploaded.catalogue.id}`;
  const { quote } = await api.json<{ quote: Quote }>("POST", `${base}/quote`, { json: { settings: rawSettings } });
  printQuote(quote);
  guardCeiling(quote, options.ceiling);
  const { check } = await api.json<{ check: CheckState }>("POST", `${base}/checks`, { json: { settings: rawSettings, acceptedQuoteMs: quote.ceilingMs } });
  out(`Submitted catalogue check ${check.id} (sweep ${check.sweep.id}, catalogue ${uploaded.catalogue.id}).`);
  if (!options.wait) return EXIT.stable;
  await waitForSweep(api, studioId, check.sweep.id, globals);
  return finish(await checkReport(api, studioId, uploaded.catalogue.id, check.id, options.failOn), options);
}

async function waitCommand(id: string, options: ReportOptions & { catalogue?: string }, globals: GlobalOptions): Promise<number> {
  const api = client(globals);
  const studioId = await studioOf(api);
  if (id.startsWith("chk_")) {
    if (!options.catalogue) throw new InputError("--catalogue", "waiting for a catalogue check needs its catalogue id (cat_…), as printed when it was submitted");
    const { check } = await api.json<{ check: CheckState }>("GET", `/studios/${studioId}/catalogues/${options.catalogue}/checks/${id}`, { notFoundField: "id" });
    await waitForSweep(api, studioId, check.sweep.id, globals);
    return finish(await checkReport(api, studioId, options.catalogue, id, options.failOn), options);
  }
  return finish(await sweepReport(api, studioId, await waitForSweep(api, studioId, id, globals), options.failOn), options);
}

async function fetchCommand(id: string, options: { catalogue?: string; outDir: string; format: "json" | "csv"; stiffness: "checked" | "recommended"; x: number; y: number; margin: number }, globals: GlobalOptions): Promise<number> {
  const api = client(globals);
  const studioId = await studioOf(api);
  const written: string[] = [];
  const save = (name: string, text: string) => {
    const file = path.join(options.outDir, name);
    writeOut(file, text);
    written.push(file);
  };
  if (id.startsWith("chk_")) {
    if (!options.catalogue) throw new InputError("--catalogue", "fetching a catalogue check needs its catalogue id (cat_…)");
    const base = `/studios/${studioId}/catalogues/${options.catalogue}/checks/${id}/export`;
    save(`${id}-check.json`, await api.text(`${base}?format=json`, { notFoundField: "id" }));
    save(`${id}-pairs.csv`, await api.text(`${base}?format=csv&table=pairs`));
    save(`${id}-recommendation.csv`, await api.text(`${base}?format=csv&table=recommendation`));
    save(`${id}-contacts.csv`, await api.text(`${base}?format=csv&table=contacts`));
    save(`${id}-game-settings.json`, await api.text(`${base}?format=game-settings&stiffness=${options.stiffness}`));
    // The friction rows exist only for catalogues whose objects give μ or μ_r (else the export answers 422).
    const { check } = await api.json<{ check: CheckState }>("GET", `/studios/${studioId}/catalogues/${options.catalogue}/checks/${id}`);
    if (check.recommendation?.friction) save(`${id}-friction.csv`, await api.text(`${base}?format=csv&table=friction`));
  } else {
    const base = `/studios/${studioId}/sweeps/${id}`;
    save(`${id}-cells.${options.format}`, await api.text(`${base}/cells?format=${options.format}&contact=true`, { notFoundField: "id" }));
    const { sweep } = await api.json<{ sweep: SweepState }>("GET", base);
    if (sweep.axes.length >= 2) save(`${id}-envelope.json`, await api.text(`${base}/envelope?x=${options.x}&y=${options.y}&margin=${options.margin}`));
  }
  for (const file of written) out(`wrote ${file}`);
  return EXIT.stable;
}

// ---------------------------------------------------------------------------

function withReportOptions(command: Command): Command {
  return command
    .addOption(new Option("--fail-on <verdicts>", "verdicts that count as at risk (comma-separated, or none)").argParser(failOnOption).default([...RISK_VERDICTS], RISK_VERDICTS.join(",")))
    .option("--junit <file>", "write a JUnit XML report (one test case per cell or pairing)")
    .option("--json <file>", "write the report as JSON");
}

export function program(): Command {
  const root = new Command("kickdrift")
    .description("Kickdrift from a build: submit sweeps and catalogue checks, wait for them, fetch results. Needs KICKDRIFT_URL and KICKDRIFT_TOKEN.")
    .option("--retries <n>", "retries of a failed call (network, 5xx) before giving up with exit 3", positiveNumber("--retries", true), 5)
    .option("--retry-delay <ms>", "delay before the first retry; doubled each time", positiveNumber("--retry-delay"), 500)
    .option("--poll <ms>", "time between progress reads while waiting", positiveNumber("--poll"), 2000)
    .option("--timeout <s>", "give up waiting (exit 3) after this long", positiveNumber("--timeout"), 3600)
    .option("--plain", "plain progress lines even on a terminal", false)
    .showHelpAfterError()
    .exitOverride();
  const globals = () => root.opts<GlobalOptions>();
  let result = EXIT.stable as number;
  withReportOptions(
    root
      .command("submit")
      .description("quote and submit a sweep from a spec file, then wait for it and report")
      .argument("<spec-file>", "sweep spec (JSON, docs/sweep-spec.md)")
      .option("--name <name>", "name of the sweep")
      .option("--ceiling <minutes>", "refuse to submit when the quote's estimate exceeds this many compute minutes", positiveNumber("--ceiling"))
      .option("--no-wait", "submit and exit without waiting"),
  ).action(async (specFile: string, options) => {
    result = await submitCommand(specFile, options, globals());
  });
  withReportOptions(
    root
      .command("check")
      .description("upload a catalogue, quote and submit a catalogue check with a settings file, then wait and report per pairing")
      .argument("<catalogue-file>", "objects of the game (CSV or JSON)")
      .argument("<settings-file>", "the game's settings for the check (JSON; docs/api.md, Catalogues)")
      .option("--catalogue-name <name>", "catalogue name (default: the file name without extension)")
      .option("--ceiling <minutes>", "refuse to submit when the quote's estimate exceeds this many compute minutes", positiveNumber("--ceiling"))
      .option("--no-wait", "submit and exit without waiting"),
  ).action(async (catalogueFile: string, settingsFile: string, options) => {
    result = await checkCommand(catalogueFile, settingsFile, options, globals());
  });
  withReportOptions(
    root
      .command("wait")
      .description("wait for a sweep (swp_…) or catalogue check (chk_…) and report")
      .argument("<id>", "sweep or check id")
      .option("--catalogue <id>", "the check's catalogue (cat_…)"),
  ).action(async (id: string, options) => {
    result = await waitCommand(id, options, globals());
  });
  root
    .command("fetch")
    .description("write a sweep's cells and envelope, or a check's exports, recommendation and game settings, to files")
    .argument("<id>", "sweep or check id")
    .option("--catalogue <id>", "the check's catalogue (cat_…)")
    .option("--out-dir <dir>", "folder for the files", ".")
    .addOption(new Option("--format <format>", "cells format").choices(["json", "csv"]).default("csv"))
    .addOption(new Option("--stiffness <which>", "game settings at the checked or the recommended stiffness").choices(["checked", "recommended"]).default("checked"))
    .option("--x <axis>", "envelope x axis index", positiveNumber("--x", true), 0)
    .option("--y <axis>", "envelope y axis index", positiveNumber("--y", true), 1)
    .option("--margin <share>", "envelope margin", positiveNumber("--margin"), 0)
    .action(async (id: string, options) => {
      result = await fetchCommand(id, options, globals());
    });
  root.hook("postAction", () => {
    process.exitCode = result;
  });
  return root;
}

export async function main(argv: string[]): Promise<number> {
  const root = program();
  try {
    await root.parseAsync(argv);
    return Number(process.exitCode ?? 0);
  } catch (error) {
    if (error instanceof CommanderError) {
      // --help and --version end here with code 0; a usage mistake is invalid input.
      return error.exitCode === 0 ? 0 : EXIT.invalidInput;
    }
    if (error instanceof InputError) {
      note(`kickdrift: invalid input: ${error.field}: ${error.message}`);
      return EXIT.invalidInput;
    }
    if (error instanceof ServiceError) {
      note(`kickdrift: service failure: ${error.message}`);
      return EXIT.serviceFailure;
    }
    note(`kickdrift: service failure: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}`);
    return EXIT.serviceFailure;
  }
}
