/**
 * Snapshot files: the discs (position, velocity, mass, radius) and static walls of one moment of a
 * game, exported as JSON, to run as a custom scene (the sweep spec's "snapshot" scene). Every field
 * is checked with the sweep spec's own zod rules, so a file accepted here is a scene the spec
 * accepts; every problem is reported at once with its JSON path and reason.
 *
 * Pure: safe to import in the browser (the upload page checks before sending; the server again).
 */
import { z } from "zod";
import type { SnapshotScene } from "../physics/types";
import { SPEC_LIMITS, formatLimit, numericRule } from "../sweeps/parameters";
import { addSnapshotOverlapIssues, snapshotBodiesSchema, snapshotWallsSchema } from "../sweeps/spec";

export const SNAPSHOT_LIMITS = {
  /** Bytes of one uploaded file: 10,000 pretty-printed discs fit with room to spare. */
  maxFileBytes: 4 * 1024 * 1024,
  /** Discs in one snapshot: the engine's limit per scene. */
  maxBodies: SPEC_LIMITS.maxBodies,
  /** Static walls in one snapshot. */
  maxWalls: SPEC_LIMITS.maxWalls,
  /** Characters of a snapshot name. */
  maxNameLength: 120,
} as const;

const gravityRule = numericRule("scene.gravityMPerS2", "snapshot");

/** The file: optional name and gravity, the discs, the walls. Unknown fields are named as problems. */
export const snapshotFileSchema = z
  .strictObject(
    {
      version: z.literal(1, { error: "version must be 1" }).default(1),
      name: z
        .string({ error: "name must be a string" })
        .trim()
        .min(1, { error: "name must not be empty" })
        .max(SNAPSHOT_LIMITS.maxNameLength, { error: `name may have at most ${SNAPSHOT_LIMITS.maxNameLength} characters` })
        .optional(),
      gravityMPerS2: z
        .number({ error: `gravityMPerS2 must be a number (m/s²) ≥ 0 and ≤ ${formatLimit(gravityRule.max)}` })
        .min(0, { error: `gravityMPerS2 must be ≥ 0 (gravity acts along −y)` })
        .max(gravityRule.max, { error: `gravityMPerS2 must be ≤ ${formatLimit(gravityRule.max)} m/s²` })
        .default(0),
      bodies: snapshotBodiesSchema,
      walls: snapshotWallsSchema.default(() => []),
    },
    { error: (issue) => (issue.code === "invalid_type" ? "a snapshot file is a JSON object with bodies (and optionally walls, gravityMPerS2, name)" : undefined) },
  )
  .superRefine((file, ctx) => addSnapshotOverlapIssues(file, ctx));

/** Problems listed one by one; the rest are counted in one last line. */
export const MAX_LISTED_PROBLEMS = 100;

export type SnapshotFile = z.output<typeof snapshotFileSchema>;

export interface SnapshotProblem {
  /** JSON path of the field, e.g. "bodies.3.massKg"; "(file)" for the whole file. */
  path: string;
  reason: string;
}

export type ParseSnapshotResult = { ok: true; snapshot: SnapshotFile } | { ok: false; problems: SnapshotProblem[] };

/** Checks the bytes of an uploaded file: size, UTF-8 JSON, then every field. */
export function parseSnapshotFile(bytes: Uint8Array): ParseSnapshotResult {
  if (bytes.byteLength === 0) return { ok: false, problems: [{ path: "(file)", reason: "the file is empty" }] };
  if (bytes.byteLength > SNAPSHOT_LIMITS.maxFileBytes) {
    return { ok: false, problems: [{ path: "(file)", reason: `the file has ${formatLimit(bytes.byteLength)} bytes; the limit is ${formatLimit(SNAPSHOT_LIMITS.maxFileBytes)} bytes (4 MiB)` }] };
  }
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    return { ok: false, problems: [{ path: "(file)", reason: "the file is not UTF-8 text" }] };
  }
  let json: unknown;
  try {
    json = JSON.parse(text.replace(/^\uFEFF/, ""));
  } catch (error) {
    return { ok: false, problems: [{ path: "(file)", reason: `the file is not valid JSON (${(error as Error).message})` }] };
  }
  return parseSnapshotValue(json);
}

/** Checks an already parsed JSON value. */
export function parseSnapshotValue(json: unknown): ParseSnapshotResult {
  const result = snapshotFileSchema.safeParse(json);
  if (result.success) return { ok: true, snapshot: result.data };
  const problems: SnapshotProblem[] = [];
  for (const issue of result.error.issues) {
    const base = issue.path.map(String);
    if (issue.code === "unrecognized_keys") {
      for (const key of issue.keys) problems.push({ path: [...base, key].join("."), reason: `unknown field "${key}"` });
    } else {
      problems.push({ path: base.join(".") || "(file)", reason: issue.message });
    }
  }
  // Whole-array problems (the body and wall limits) first; then at most MAX_LISTED_PROBLEMS in file order.
  const whole = problems.filter((problem) => problem.path === "bodies" || problem.path === "walls" || problem.path === "(file)");
  const ordered = [...whole, ...problems.filter((problem) => !whole.includes(problem))];
  if (ordered.length <= MAX_LISTED_PROBLEMS) return { ok: false, problems: ordered };
  const listed = ordered.slice(0, MAX_LISTED_PROBLEMS);
  listed.push({ path: "(file)", reason: `and ${formatLimit(ordered.length - MAX_LISTED_PROBLEMS)} more problems not listed` });
  return { ok: false, problems: listed };
}

/** The sweep scene of a snapshot, run as exported (speedScale 1). */
export function snapshotScene(snapshot: Pick<SnapshotFile, "bodies" | "walls" | "gravityMPerS2">): SnapshotScene {
  return { kind: "snapshot", bodies: snapshot.bodies, walls: snapshot.walls, gravityMPerS2: snapshot.gravityMPerS2, speedScale: 1 };
}
