"use client";
import { CRATESLIDE_SNAPSHOT_JSON } from "@/lib/snapshots/demo";
/**
 * The studio's scene snapshots: every version by name with its original file and a link that opens
 * the sweep builder on it, and (for engineers and owners) the upload: a file input with drag and
 * drop, every problem of the file at once naming the disc or wall by its number (from 1) and the
 * field in words (checked here first, then again by the server), a drawing of the scene, nothing
 * saved until the file is valid.
 */
import Link from "next/link";
import { useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { Alert } from "@/components/ui";
import { FileProblems, UploadCard, useUploadCard } from "@/components/uploads/file-upload";
import { UploadsPage, type UploadsListKind } from "@/components/uploads/uploads-page";
import { SNAPSHOT_LIMITS, parseSnapshotFile, type ParseSnapshotResult } from "@/lib/snapshots/format";
import { uploadFile } from "@/lib/ui/api";
import { issuePlace, problemPlace } from "@/lib/snapshots/drawing";
import { ScenePreview } from "./scene-preview";
import { studioApiPath } from "@/lib/ui/queries";
import type { StudioRole } from "@/lib/ui/types";
import type { SnapshotDetail, SnapshotSummary } from "@/lib/snapshots/store";

const snapshotsPath = (studioId: string) => `${studioApiPath(studioId)}/snapshots`;
const listKey = (studioId: string) => ["snapshots", studioId] as const;

export function SnapshotsPage({ studioId, studioName, role, initialSnapshots }: { studioId: string; studioName: string; role: StudioRole; initialSnapshots?: SnapshotSummary[] }) {
  const canWrite = role === "owner" || role === "engineer";
  const kind: UploadsListKind<SnapshotSummary> = {
    title: "Snapshots",
    nameHeader: "Snapshot",
    loadingLabel: "snapshots",
    empty: { writer: "No snapshots yet. Upload the discs and walls of a moment of your game above.", reader: "No snapshots yet." },
    tableTestId: "snapshots-table",
    queryKey: listKey(studioId),
    path: snapshotsPath(studioId),
    field: "snapshots",
    name: (snapshot) => snapshot.name,
    columns: [
      { key: "discs", header: "Discs", cell: (snapshot) => snapshot.bodyCount },
      { key: "walls", header: "Walls", cell: (snapshot) => snapshot.wallCount },
    ],
    actions: {
      key: "actions",
      header: "Actions",
      srOnly: true,
      className: "space-x-3 whitespace-nowrap",
      cell: (snapshot) => (
        <>
          <a href={`${snapshotsPath(studioId)}/${snapshot.id}/file`} className="text-action hover:underline">
            Original file
          </a>
          {canWrite ? (
            <Link href={`/studios/${studioId}/sweeps/new?snapshot=${encodeURIComponent(snapshot.id)}`} className="text-action hover:underline">
              New sweep from this snapshot
            </Link>
          ) : null}
        </>
      ),
    },
  };
  return <UploadsPage kind={kind} studioId={studioId} studioName={studioName} role={role} initial={initialSnapshots} upload={<SnapshotUpload studioId={studioId} />} />;
}

interface Loaded {
  fileName: string;
  bytes: Uint8Array;
  parsed: ParseSnapshotResult;
}

function SnapshotUpload({ studioId }: { studioId: string }) {
  const queryClient = useQueryClient();
  const card = useUploadCard<Loaded>();
  const { loaded, setLoaded, name, setName, saving, setServerError, clearFile } = card;
  const [saved, setSaved] = useState<SnapshotDetail | null>(null);

  const problems = loaded && !loaded.parsed.ok ? loaded.parsed.problems : [];
  const canSave = loaded !== null && loaded.parsed.ok && !saving;

  async function take(file: File) {
    setServerError(null);
    setSaved(null);
    const bytes = new Uint8Array(await file.arrayBuffer());
    const parsed = parseSnapshotFile(bytes);
    setLoaded({ fileName: file.name, bytes, parsed });
    setName(parsed.ok && parsed.snapshot.name ? parsed.snapshot.name : file.name.replace(/\.[^.]*$/, ""));
  }

  const save = () =>
    card.save(async (loaded) => {
      const body = await uploadFile<{ snapshot: SnapshotDetail }>(snapshotsPath(studioId), new Blob([loaded.bytes as BlobPart], { type: "application/json" }), loaded.fileName, name);
      setSaved(body.snapshot);
      clearFile();
      await queryClient.invalidateQueries({ queryKey: listKey(studioId) });
    });

  return (
    <UploadCard
      card={card}
      kind={{
        noun: "snapshot",
        sample: { href: `data:application/json;charset=utf-8,${encodeURIComponent(CRATESLIDE_SNAPSHOT_JSON)}`, fileName: "sample-snapshot-loading-bay.json", format: "JSON" },
        dropLabel: "Drop a snapshot file here, or choose one",
        accept: ".json,application/json",
        maxNameLength: SNAPSHOT_LIMITS.maxNameLength,
      }}
      intro={
        <>
          A JSON file with <code className="font-mono text-xs">bodies</code> (each <code className="font-mono text-xs">xM, yM, vxMPerS, vyMPerS, massKg, radiusM</code>), optional{" "}
          <code className="font-mono text-xs">walls</code> (each <code className="font-mono text-xs">normalX, normalY, offsetM</code>), <code className="font-mono text-xs">gravityMPerS2</code> and{" "}
          <code className="font-mono text-xs">name</code>. At most {SNAPSHOT_LIMITS.maxBodies.toLocaleString("en-US")} discs, {SNAPSHOT_LIMITS.maxWalls} walls and {SNAPSHOT_LIMITS.maxFileBytes / (1024 * 1024)} MiB;
          discs may not start overlapping by more than 1 % of a radius. Nothing is saved until the file is valid.
        </>
      }
      onFile={(file) => void take(file)}
      notice={
        saved ? (
          <Alert tone="ok">
            Saved {saved.name} v{saved.version} ({saved.bodyCount} discs, {saved.wallCount} walls).{" "}
            <Link href={`/studios/${studioId}/sweeps/new?snapshot=${encodeURIComponent(saved.id)}`} className="font-medium text-action hover:underline">
              New sweep from this snapshot
            </Link>
          </Alert>
        ) : null
      }
      fieldLabel={issuePlace}
      canSave={canSave}
      onSave={() => void save()}
    >
      {problems.length > 0 && loaded ? (
        <FileProblems
          problems={problems}
          fileName={loaded.fileName}
          fixWhere="in the file and choose it again"
          testId="snapshot-problems"
          itemTestId="snapshot-problem"
          renderProblem={(problem) => (
            <>
              <span className="font-medium">{problemPlace(problem.path)}</span>: {problem.reason}
            </>
          )}
        />
      ) : loaded?.parsed.ok ? (
        <>
          <Alert tone="ok">
            {loaded.parsed.snapshot.bodies.length} discs and {loaded.parsed.snapshot.walls.length} walls, every field valid. Check the drawing before saving.
          </Alert>
          <ScenePreview bodies={loaded.parsed.snapshot.bodies} walls={loaded.parsed.snapshot.walls} />
        </>
      ) : null}
    </UploadCard>
  );
}
