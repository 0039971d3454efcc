/**
 * Scene snapshots in the database, scoped by studio. A snapshot is stored only when its file has no
 * problem; each upload under a name is that name's next version, with the original bytes and their
 * SHA-256. A sweep over a snapshot carries its scene inline (the spec stays self-contained, so its
 * results are deterministic whatever is uploaded later): `snapshotSweepSpec` builds that spec.
 */
import "server-only";
import type { Db } from "@/db/client";
import { snapshots, type Snapshot } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import type { SnapshotScene } from "@/lib/physics/types";
import { SPEC_LIMITS } from "@/lib/sweeps/parameters";
import type { SweepSpecInput } from "@/lib/sweeps/spec";
import { versionedUploads, versionSummary, type VersionSummary } from "@/lib/uploads/versioned";
import { problemPlace } from "./drawing";
import { SNAPSHOT_LIMITS, parseSnapshotFile, snapshotScene, type SnapshotProblem } from "./format";
import { describeSnapshotSuggestion, suggestSnapshotSweep, type SnapshotSweepSuggestion } from "./suggest";

/** Snapshots as versioned uploads (lib/uploads/versioned.ts). */
export const snapshotUploads = versionedUploads({
  table: snapshots,
  uniqueIndex: "snapshots_studio_name_version_uq",
  idPrefix: "snp",
  noun: "snapshot",
  problemsCode: "invalid_snapshot",
  fallbackFileName: "snapshot.json",
  maxFileBytes: SNAPSHOT_LIMITS.maxFileBytes,
  maxFileText: "4 MiB",
  maxNameLength: SNAPSHOT_LIMITS.maxNameLength,
  nameMissing: "a snapshot needs a name (in the form, in the file, or from the file name).",
});

/**
 * Every problem of a file as one 422: each issue's `field` is its JSON path (for API clients), the
 * message names the place as users count it (disc numbers from 1, the field in words).
 */
export function snapshotProblemsError(problems: readonly SnapshotProblem[]): ApiError {
  return snapshotUploads.problemsError(
    problems,
    (problem) => (problem.path === "(file)" ? "file" : `file.${problem.path}`),
    (problem) => `${problemPlace(problem.path)}: ${problem.reason}`,
    (problem) => problem.reason,
  );
}

export interface SnapshotUpload {
  name?: string;
  fileName: string;
  bytes: Uint8Array;
  createdByUserId: string | null;
}

export interface SnapshotSummary extends VersionSummary {
  bodyCount: number;
  wallCount: number;
}

export interface SnapshotDetail extends SnapshotSummary {
  scene: SnapshotScene;
  /** Every version of the same name, newest first. */
  versions: SnapshotSummary[];
}

export function snapshotSummary(row: Snapshot): SnapshotSummary {
  return { ...versionSummary(row), bodyCount: row.bodyCount, wallCount: row.wallCount };
}

/** Parses, checks and stores a snapshot file as the next version of its name; nothing is stored on any problem. */
export async function saveSnapshot(db: Db, studioId: string, upload: SnapshotUpload): Promise<Snapshot> {
  snapshotUploads.checkSize(upload.bytes);
  const parsed = parseSnapshotFile(upload.bytes);
  if (!parsed.ok) throw snapshotProblemsError(parsed.problems);
  // The name given in the form (or ?name=) wins, then the file's own "name", then the file name.
  const name = snapshotUploads.nameOf(upload.name ?? parsed.snapshot.name, upload.fileName);
  const scene = snapshotScene(parsed.snapshot);
  return snapshotUploads.insert(db, studioId, name, {
    ...snapshotUploads.file(upload.bytes, upload.fileName),
    scene,
    bodyCount: scene.bodies.length,
    wallCount: scene.walls.length,
    createdByUserId: upload.createdByUserId,
  });
}

export async function listSnapshots(db: Db, studioId: string): Promise<SnapshotSummary[]> {
  return (await snapshotUploads.list(db, studioId)).map(snapshotSummary);
}

export function snapshotOfStudio(db: Db, studioId: string, snapshotId: string): Promise<Snapshot> {
  return snapshotUploads.ofStudio(db, studioId, snapshotId);
}

export async function snapshotDetail(db: Db, row: Snapshot): Promise<SnapshotDetail> {
  const versions = await snapshotUploads.versionsOf(db, row);
  return { ...snapshotSummary(row), scene: row.scene, versions: versions.map(snapshotSummary) };
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
  const row = await snapshotUploads.find(db, studioId, snapshotId);
  if (!row) throw new ApiError("invalid_spec", `${field}: no snapshot ${JSON.stringify(snapshotId)} in this studio.`, field, [{ field, message: `no snapshot ${JSON.stringify(snapshotId)} in this studio` }]);
  const stored = row.scene;
  const inline = { ...stored, ...rest, bodies: stored.bodies, walls: stored.walls, kind: "snapshot" };
  const typed = spec as { scenario: Record<string, unknown> };
  return { ...typed, scenario: { ...typed.scenario, scene: inline } };
}
