/**
 * Scene snapshots in the database, scoped by studio. A snapshot is stored only when its file has no
 * problem; each upload under a name is that name's next version, with the original bytes and their
 * SHA-256. A sweep over a snapshot carries its scene inline (the spec stays self-contained, so its
 * results are deterministic whatever is uploaded later): `snapshotSweepSpec` builds that spec.
 */
import { and, asc, desc, eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { newId } from "@/db/ids";
import { snapshots, type Snapshot } from "@/db/schema";
import { ApiError, type FieldIssue } from "@/lib/errors";
import type { SnapshotScene } from "@/lib/physics/types";
import { formatLimit, SPEC_LIMITS } from "@/lib/sweeps/parameters";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
import { insertNextVersion, storedFile } from "@/lib/uploads/versioned";
import { problemPlace } from "./drawing";
import { SNAPSHOT_LIMITS, parseSnapshotFile, snapshotScene, type SnapshotProblem } from "./format";
import { describeSnapshotSuggestion, suggestSnapshotSweep, type SnapshotSweepSuggestion } from "./suggest";

/**
 * Every problem of a file as one 422: each issue's `field` is its JSON path (for API clients), the
 * message names the place as users count it (disc numbers from 1, the field in words).
 */
export function snapshotProblemsError(problems: readonly SnapshotProblem[]): ApiError {
  const issues: FieldIssue[] = problems.map((problem) => ({ field: problem.path === "(file)" ? "file" : `file.${problem.path}`, message: problem.reason }));
  const describe = (problem: SnapshotProblem) => `${problemPlace(problem.path)}: ${problem.reason}`;
  const summary = problems.length === 1 ? describe(problems[0]) : `${problems.length} problems: ${problems.slice(0, 3).map(describe).join("; ")}${problems.length > 3 ? "; …" : ""}`;
  return new ApiError("invalid_snapshot", `The snapshot was not saved. ${summary}`, issues[0]?.field ?? "file", issues);
}

export interface SnapshotUpload {
  name?: string;
  fileName: string;
  bytes: Uint8Array;
  createdByUserId: string | null;
}

export interface SnapshotSummary {
  id: string;
  name: string;
  version: number;
  contentHash: string;
  fileName: string;
  fileBytes: number;
  bodyCount: number;
  wallCount: number;
  createdAt: string;
}

export interface SnapshotDetail extends SnapshotSummary {
  scene: SnapshotScene;
  /** Every version of the same name, newest first. */
  versions: SnapshotSummary[];
}

export function snapshotSummary(row: Snapshot): SnapshotSummary {
  return {
    id: row.id,
    name: row.name,
    version: row.version,
    contentHash: row.contentHash,
    fileName: row.fileName,
    fileBytes: row.fileBytes,
    bodyCount: row.bodyCount,
    wallCount: row.wallCount,
    createdAt: row.createdAt.toISOString(),
  };
}

function nameOf(upload: SnapshotUpload, fileName: string | undefined): string {
  const name = (upload.name ?? fileName ?? upload.fileName.replace(/\.[^.]*$/, "")).trim();
  if (/[\u0000-\u001f\u007f]/.test(name)) throw new ApiError("validation_failed", "name: must not hold control characters (tab, line break, NUL).", "name");
  if (name === "") throw new ApiError("validation_failed", "name: a snapshot needs a name (in the form, in the file, or from the file name).", "name");
  if (name.length > SNAPSHOT_LIMITS.maxNameLength) throw new ApiError("validation_failed", `name: at most ${SNAPSHOT_LIMITS.maxNameLength} characters; got ${name.length}.`, "name");
  return name;
}

/** Parses, checks and stores a snapshot file as the next version of its name; nothing is stored on any problem. */
export async function saveSnapshot(db: Db, studioId: string, upload: SnapshotUpload): Promise<Snapshot> {
  if (upload.bytes.length > SNAPSHOT_LIMITS.maxFileBytes) {
    throw new ApiError("payload_too_large", `file: ${formatLimit(upload.bytes.length)} bytes exceed the limit of ${formatLimit(SNAPSHOT_LIMITS.maxFileBytes)} bytes (4 MiB).`, "file");
  }
  const parsed = parseSnapshotFile(upload.bytes);
  if (!parsed.ok) throw snapshotProblemsError(parsed.problems);
  const name = nameOf(upload, parsed.snapshot.name);
  const scene = snapshotScene(parsed.snapshot);
  const file = storedFile(upload.bytes, upload.fileName, "snapshot.json");
  return insertNextVersion(db, { table: snapshots, uniqueIndex: "snapshots_studio_name_version_uq", studioId, name }, async (tx, version) => {
    const [row] = await tx
      .insert(snapshots)
      .values({
        id: newId("snp"),
        studioId,
        name,
        version,
        ...file,
        scene,
        bodyCount: scene.bodies.length,
        wallCount: scene.walls.length,
        createdByUserId: upload.createdByUserId,
      })
      .returning();
    return row;
  });
}

export async function listSnapshots(db: Db, studioId: string): Promise<SnapshotSummary[]> {
  const rows = await db.select().from(snapshots).where(eq(snapshots.studioId, studioId)).orderBy(asc(snapshots.name), desc(snapshots.version));
  return rows.map(snapshotSummary);
}

export async function snapshotOfStudio(db: Db, studioId: string, snapshotId: string): Promise<Snapshot> {
  const [row] = await db
    .select()
    .from(snapshots)
    .where(and(eq(snapshots.id, snapshotId), eq(snapshots.studioId, studioId)));
  if (!row) throw new ApiError("not_found", "Snapshot not found.");
  return row;
}

export async function snapshotDetail(db: Db, row: Snapshot): Promise<SnapshotDetail> {
  const versions = await db
    .select()
    .from(snapshots)
    .where(and(eq(snapshots.studioId, row.studioId), eq(snapshots.name, row.name)))
    .orderBy(desc(snapshots.version));
  return { ...snapshotSummary(row), scene: row.scene, versions: versions.map(snapshotSummary) };
}

export function snapshotFileBytes(row: Snapshot): Uint8Array {
  return new Uint8Array(Buffer.from(row.fileBase64, "base64"));
}

/**
 * A starting sweep over a stored snapshot, its scene inline: linear contacts with a target
 * restitution, velocity Verlet, and a stiffness × frame-step map placed from the scene's own
 * masses, sizes and speeds (lib/snapshots/suggest.ts; the builder shows why and lets the user
 * change all of it).
 */
export function snapshotSweepSpec(row: Pick<Snapshot, "name" | "version" | "scene">, suggestion: SnapshotSweepSuggestion = suggestSnapshotSweep(row.scene)): SweepSpecInput {
  return {
    version: 1,
    name: `Snapshot: ${row.name} v${row.version}`.slice(0, SPEC_LIMITS.maxNameLength),
    scenario: {
      scene: row.scene,
      contact: { model: "linear", stiffness: suggestion.stiffnessNPerM, damping: { kind: "restitution", value: 0.5 } },
      integrator: "velocity-verlet",
      dtS: suggestion.gameFrameStepS,
      substeps: 1,
      durationS: suggestion.durationS,
      seed: 1,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", ...suggestion.stiffnessAxis },
      { parameter: "dtS", values: suggestion.frameSteps },
    ],
  };
}

/** The suggested starting sweep over a snapshot with the suggestion behind it and its reasoning in words. */
export function snapshotSweepStart(row: Pick<Snapshot, "name" | "version" | "scene">): { sweepSpec: SweepSpecInput; sweepSuggestion: SnapshotSweepSuggestion & { reasoning: string[] } } {
  const suggestion = suggestSnapshotSweep(row.scene);
  return { sweepSpec: snapshotSweepSpec(row, suggestion), sweepSuggestion: { ...suggestion, reasoning: describeSnapshotSuggestion(suggestion) } };
}

/**
 * A spec whose scene names a stored snapshot (`{ kind: "snapshot", snapshotId, speedScale?,
 * gravityMPerS2? }`) with that snapshot's discs and walls written in, so the stored spec is
 * self-contained (its results never depend on what is uploaded later). Any other spec is returned
 * as it is; the schema checks the result as usual (other fields beside the reference are refused
 * there as unknown). An id of another studio, or none, is a 422 naming the field.
 */
export async function resolveSnapshotReference(db: Db, studioId: string, spec: unknown): Promise<unknown> {
  const scene = (spec as { scenario?: { scene?: unknown } } | null)?.scenario?.scene as Record<string, unknown> | undefined;
  if (!scene || typeof scene !== "object" || scene.kind !== "snapshot" || !("snapshotId" in scene)) return spec;
  const field = "spec.scenario.scene.snapshotId";
  const { snapshotId, ...rest } = scene;
  if (typeof snapshotId !== "string" || snapshotId === "") {
    throw new ApiError("invalid_spec", `${field}: must be the id of one of the studio's snapshots.`, field, [{ field, message: "must be the id of one of the studio's snapshots" }]);
  }
  const [row] = await db
    .select()
    .from(snapshots)
    .where(and(eq(snapshots.id, snapshotId), eq(snapshots.studioId, studioId)));
  if (!row) throw new ApiError("invalid_spec", `${field}: no snapshot ${JSON.stringify(snapshotId)} in this studio.`, field, [{ field, message: `no snapshot ${JSON.stringify(snapshotId)} in this studio` }]);
  const stored = row.scene;
  const inline = { ...stored, ...rest, bodies: stored.bodies, walls: stored.walls, kind: "snapshot" };
  const typed = spec as { scenario: Record<string, unknown> };
  return { ...typed, scenario: { ...typed.scenario, scene: inline } };
}
