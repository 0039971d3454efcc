/**
 * Snapshot files: the discs (position, velocity, mass, radius) and static walls of one moment of a
 * game, exported as JSON, to run as a custom scene (the sweep spec's "snapshot" scene). Every field
 * is checked with the sweep spec's own zod rules, so a file accepted here is a scene the spec
 * accepts; every problem is reported at once with its JSON path and reason.
 *
 * Pure: safe to import in the browser (the upload page checks before sending; the server again).
 */
import { z } from "@/lib/zod";
import { describeSnapshotOverlap, snapshotOverlaps } from "../physics/scenes";
import type { SnapshotBody, SnapshotScene, SnapshotWall } from "../physics/types";
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
  for (const problem of overlapsAmongSoundEntries(json)) {
    if (!problems.some((known) => known.path === problem.path && known.reason === problem.reason)) problems.push(problem);
  }
  // Whole-array problems (the body and wall limits) first; then at most MAX_LISTED_PROBLEMS in file order.
  const whole = problems.filter((problem) => problem.path === "bodies" || problem.path === "walls" || problem.path === "(file)");
  const ordered = [...whole, ...problems.filter((problem) => !whole.includes(problem))];
  if (ordered.length <= MAX_LISTED_PROBLEMS) return { ok: false, problems: ordered };
  const listed = ordered.slice(0, MAX_LISTED_PROBLEMS);
  listed.push({ path: "(file)", reason: `and ${formatLimit(ordered.length - MAX_LISTED_PROBLEMS)} more problems not listed` });
  return { ok: false, problems: listed };
}

/**
 * Initial overlaps among the discs and walls whose own fields are sound, named by their index in
 * the file: the schema checks overlaps only once every field parses, and a file is reported whole.
 */
function overlapsAmongSoundEntries(json: unknown): SnapshotProblem[] {
  const file = json as { bodies?: unknown; walls?: unknown } | null;
  if (!file || typeof file !== "object" || !Array.isArray(file.bodies) || file.bodies.length > SNAPSHOT_LIMITS.maxBodies) return [];
  const finite = (entry: Record<string, unknown>, keys: readonly string[]) => keys.every((key) => typeof entry[key] === "number" && Number.isFinite(entry[key]));
  const indices: number[] = [];
  const bodies: SnapshotBody[] = [];
  file.bodies.forEach((entry, i) => {
    if (entry && typeof entry === "object" && finite(entry as Record<string, unknown>, ["xM", "yM", "massKg", "radiusM"]) && (entry as SnapshotBody).radiusM > 0) {
      indices.push(i);
      bodies.push(entry as SnapshotBody);
    }
  });
  const wallIndices: number[] = [];
  const walls: SnapshotWall[] = [];
  (Array.isArray(file.walls) && file.walls.length <= SNAPSHOT_LIMITS.maxWalls ? file.walls : []).forEach((entry: unknown, w: number) => {
    if (entry && typeof entry === "object" && finite(entry as Record<string, unknown>, ["normalX", "normalY", "offsetM"]) && Math.hypot((entry as SnapshotWall).normalX, (entry as SnapshotWall).normalY) >= 1e-6) {
      wallIndices.push(w);
      walls.push(entry as SnapshotWall);
    }
  });
  return snapshotOverlaps({ bodies, walls }, 20).map((overlap) => {
    const named = { ...overlap, a: indices[overlap.a], b: overlap.b === undefined ? undefined : indices[overlap.b], wall: overlap.wall === undefined ? undefined : wallIndices[overlap.wall] };
    return { path: `bodies.${named.a}`, reason: describeSnapshotOverlap(named) };
  });
}

/** The sweep scene of a snapshot, run as exported (speedScale 1). */
export function snapshotScene(snapshot: Pick<SnapshotFile, "bodies" | "walls" | "gravityMPerS2">): SnapshotScene {
  return { kind: "snapshot", bodies: snapshot.bodies, walls: snapshot.walls, gravityMPerS2: snapshot.gravityMPerS2, speedScale: 1 };
}
