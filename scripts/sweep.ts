/**
 * Command-line sweep runner:
 *   npm run sweep -- --spec FILE --out FILE [--threads N] [--format json|csv] [--chunk-ms MS] [--max-chunk-cells N] [--quiet]
 *
 * Validates the spec (field errors on stderr, exit 2), runs every cell on the
 * worker-thread pool, reports progress on stderr and prints the verdict counts
 * on stdout. The output file is byte-identical for any --threads, --chunk-ms
 * and --max-chunk-cells. Exit codes: 0 done, 1 a run failed, 2 bad usage or spec.
 */
import { closeSync, openSync, readFileSync, rmSync, writeSync } from "node:fs";
import { parseArgs } from "node:util";
import { predictSweep } from "../lib/sweeps/chunks";
import { expandAxes } from "../lib/sweeps/grid";
import { createChunkPool, defaultThreadCount } from "../lib/sweeps/pool";
import { csvResultsEncoder, jsonResultsEncoder, type ResultsEncoder } from "../lib/sweeps/results";
import { resultsHeader, runSweep } from "../lib/sweeps/run";
import { parseSweepSpec } from "../lib/sweeps/spec";
import { VERDICTS } from "../lib/physics/types";

const USAGE = "usage: npm run sweep -- --spec FILE --out FILE [--threads N] [--format json|csv] [--chunk-ms MS] [--max-chunk-cells N] [--quiet]";

class UsageError extends Error {}

function positiveInteger(name: string, text: string | undefined, fallback: number): number {
  if (text === undefined) return fallback;
  const value = Number(text);
  if (!Number.isInteger(value) || value < 1) throw new UsageError(`--${name} must be an integer ≥ 1; got ${JSON.stringify(text)}`);
  return value;
}

function positiveNumber(name: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const value = Number(text);
  if (!Number.isFinite(value) || value <= 0) throw new UsageError(`--${name} must be a number > 0; got ${JSON.stringify(text)}`);
  return value;
}

function readArgs() {
  const { values } = parseArgs({
    options: {
      spec: { type: "string" },
      out: { type: "string" },
      threads: { type: "string" },
      format: { type: "string" },
      "chunk-ms": { type: "string" },
      "max-chunk-cells": { type: "string" },
      quiet: { type: "boolean" },
      help: { type: "boolean" },
    },
    strict: true,
  });
  if (values.help) {
    process.stdout.write(`${USAGE}\n`);
    process.exit(0);
  }
  if (!values.spec) throw new UsageError("--spec FILE is required");
  if (!values.out) throw new UsageError("--out FILE is required");
  const format = values.format ?? (values.out.endsWith(".csv") ? "csv" : "json");
  if (format !== "json" && format !== "csv") throw new UsageError(`--format must be json or csv; got ${JSON.stringify(format)}`);
  return {
    specFile: values.spec,
    outFile: values.out,
    format,
    threads: positiveInteger("threads", values.threads, defaultThreadCount()),
    targetChunkMs: positiveNumber("chunk-ms", values["chunk-ms"]),
    maxCellsPerChunk: values["max-chunk-cells"] === undefined ? undefined : positiveInteger("max-chunk-cells", values["max-chunk-cells"], 1),
    quiet: values.quiet ?? false,
  };
}

function readSpec(file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, "utf8");
  } catch (error) {
    throw new UsageError(`cannot read the spec ${file}: ${(error as Error).message}`);
  }
  try {
    return JSON.parse(text);
  } catch (error) {
    throw new UsageError(`the spec ${file} is not valid JSON: ${(error as Error).message}`);
  }
}

async function main(): Promise<number> {
  let args: ReturnType<typeof readArgs>;
  let input: unknown;
  try {
    args = readArgs();
    input = readSpec(args.specFile);
  } catch (error) {
    process.stderr.write(`${(error as Error).message}\n${USAGE}\n`);
    return 2;
  }

  const parsed = parseSweepSpec(input);
  if (!parsed.ok) {
    process.stderr.write(`the spec ${args.specFile} is invalid:\n`);
    for (const issue of parsed.issues) process.stderr.write(`  ${issue.field}: ${issue.message}\n`);
    return 2;
  }
  const spec = parsed.spec;
  const axes = expandAxes(spec);
  const header = resultsHeader(spec, axes);
  const quote = predictSweep(spec, { axes, targetChunkMs: args.targetChunkMs, maxCellsPerChunk: args.maxCellsPerChunk });
  const log = (text: string) => {
    if (!args.quiet) process.stderr.write(text);
  };
  log(`${header.cellCount} cells on ${args.threads} thread(s); predicted compute ${quote.computeMs} ms (expected ${quote.bandMs.low}–${quote.bandMs.high} ms)\n`);

  // Synchronous writes: the file grows as chunks land, without buffering a 100 MB document in memory.
  let fd: number;
  try {
    fd = openSync(args.outFile, "w");
  } catch (error) {
    process.stderr.write(`cannot write ${args.outFile}: ${(error as Error).message}\n`);
    return 2;
  }
  let open = true;
  const write = (text: string) => {
    if (text) writeSync(fd, text);
  };
  const close = () => {
    if (open) closeSync(fd);
    open = false;
  };
  const encoder: ResultsEncoder = args.format === "csv" ? csvResultsEncoder(header) : jsonResultsEncoder(header);
  write(encoder.head());
  const pool = createChunkPool({ threads: args.threads, entry: "source" });
  const startedMs = performance.now();
  try {
    const summary = await runSweep(spec, {
      pool,
      axes,
      plan: quote.plan,
      onResults: (results) => write(encoder.cells(results)),
      onProgress: (progress) => {
        const line = `chunk ${progress.chunksDone}/${progress.chunks}, cells ${progress.cellsDone}/${progress.cells}, billed ${progress.billedMs} ms`;
        // A terminal gets one line rewritten in place; a log gets a line per tenth of the chunks.
        if (process.stderr.isTTY) log(`\r${line}`);
        else if (progress.chunksDone === progress.chunks || progress.chunksDone % Math.max(1, Math.ceil(progress.chunks / 10)) === 0) log(`${line}\n`);
      },
    });
    write(encoder.tail());
    close();
    if (process.stderr.isTTY) log("\n");
    const wallMs = Math.round(performance.now() - startedMs);
    const counts = VERDICTS.map((verdict) => `${verdict} ${summary.verdictCounts[verdict]}`).join(", ");
    process.stdout.write(`cells ${header.cellCount}: ${counts}\n`);
    process.stdout.write(`chunks ${summary.chunks.length}, billed ${summary.billedMs} ms (${summary.workUnits} work units), worker wall time ${summary.wallMs} ms, wall ${wallMs} ms; wrote ${args.outFile}\n`);
    return 0;
  } catch (error) {
    // A half-written file would look like results: remove it.
    close();
    rmSync(args.outFile, { force: true });
    log("\n");
    process.stderr.write(`sweep failed: ${(error as Error).message}\n`);
    return 1;
  } finally {
    await pool.close().catch(() => undefined);
  }
}

// Piped into a pager or `head` that exits early: stop quietly, as command-line tools do.
process.stdout.on("error", (error: NodeJS.ErrnoException) => {
  if (error.code === "EPIPE") process.exit(0);
  throw error;
});

main().then(
  (code) => process.exit(code),
  (error: unknown) => {
    process.stderr.write(`sweep failed: ${error instanceof Error ? error.stack : String(error)}\n`);
    process.exit(1);
  },
);
