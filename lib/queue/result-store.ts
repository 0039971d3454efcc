/**
 * Where the packed results of a chunk (one blob per chunk, lib/sweeps/packed.ts) are kept.
 *
 * - "file" (the default with PGlite): a file per chunk under `KICKDRIFT_RESULTS_DIR` (default
 *   `<data folder>/results`). The embedded database moves large values slowly (tens of ns a
 *   byte through its WASM protocol and TOAST), which would cost more than the simulation itself;
 *   a file write costs the kernel a copy. The file is written in full (temporary name, fsync,
 *   rename) BEFORE the transaction that records it, and its name carries the chunk's attempt, so
 *   the transaction stays the one moment a chunk becomes done: a crash before it leaves an
 *   unreferenced file that nothing reads, and the rerun writes another.
 * - "database" (the default with `DATABASE_URL`): the blob goes into `sweep_results.data` in that
 *   same transaction, so every host sharing the PostgreSQL server sees it.
 *
 * `KICKDRIFT_RESULT_STORE=file|database` overrides the default.
 *
 * Node only.
 */
import "server-only";
import { mkdir, open, readFile, readdir, rename, rm, rmdir, stat } from "node:fs/promises";
import path from "node:path";
import { isNotNull } from "drizzle-orm";
import { dataDir, type Db } from "@/db/client";
import { sweepResults } from "@/db/schema";

export type ResultStoreKind = "file" | "database";

export function resultStoreKind(): ResultStoreKind {
  const chosen = process.env.KICKDRIFT_RESULT_STORE;
  if (chosen === "file" || chosen === "database") return chosen;
  return process.env.DATABASE_URL ? "database" : "file";
}

export function resultsDir(): string {
  return path.resolve(/*turbopackIgnore: true*/ process.env.KICKDRIFT_RESULTS_DIR ?? path.join(dataDir(), "results"));
}

/** What a sweep_results row records about its blob. */
export interface StoredBlob {
  bytes: number;
  location: string | null;
  data: Uint8Array | null;
}

const SAFE_NAME = /^[A-Za-z0-9_-]+$/;
/** Sweep folders already made by this process (one mkdir per sweep, not per chunk). */
const madeFolders = new Set<string>();

/**
 * Keep a chunk's blob where the store wants it, ready to be recorded: for files, written and
 * synced under a name of its own (`tag` tells attempts apart); for the database, passed through.
 */
export async function putBlob(sweepId: string, chunkIndex: number, tag: string, bytes: Uint8Array): Promise<StoredBlob> {
  if (resultStoreKind() === "database") return { bytes: bytes.byteLength, location: null, data: bytes };
  if (!SAFE_NAME.test(sweepId) || !SAFE_NAME.test(tag)) throw new Error(`unsafe result file name: ${sweepId}/${tag}`);
  const location = `${sweepId}/${chunkIndex}-${tag}.kdr`;
  const target = path.join(resultsDir(), location);
  const folder = path.dirname(target);
  if (!madeFolders.has(folder)) {
    await mkdir(folder, { recursive: true });
    if (madeFolders.size > 10_000) madeFolders.clear();
    madeFolders.add(folder);
  }
  const temporary = `${target}.${process.pid}.tmp`;
  const handle = await open(temporary, "w");
  try {
    await handle.writeFile(bytes);
    await handle.datasync();
  } finally {
    await handle.close();
  }
  await rename(temporary, target);
  return { bytes: bytes.byteLength, location, data: null };
}

/** The blob a sweep_results row points at; checks its length against the row. */
export async function readBlob(row: { location: string | null; data: Uint8Array | null; bytes: number }): Promise<Uint8Array> {
  let bytes: Uint8Array;
  if (row.data) bytes = row.data;
  else if (row.location) bytes = await readFile(path.join(resultsDir(), row.location));
  else throw new Error("a results row names neither a file nor data");
  if (bytes.byteLength !== row.bytes) throw new Error(`results ${row.location ?? "(data)"}: ${bytes.byteLength} bytes where ${row.bytes} were stored`);
  return bytes;
}

/** Drop a file the database no longer points at (a partial chunk's cached cells once merged). */
export async function dropBlobFile(location: string | null): Promise<void> {
  if (location) await rm(path.join(resultsDir(), location), { force: true });
}

/** How old an unreferenced result file must be before removeOrphanBlobs takes it (ms). */
export const ORPHAN_MIN_AGE_MS = 10 * 60_000;

/**
 * Remove result files no results row points at: a chunk's blob written just before its runner
 * died, or before a transaction that failed. Only files older than `minAgeMs` go, so a blob
 * written a moment before its recording transaction is never taken. Run at start by the queue
 * runner (file store only). Returns how many files were removed.
 */
/** The file system's "now": the modification time it gives a file written in `folder` at this moment. */
export async function fileSystemNowMs(folder: string): Promise<number> {
  const probe = path.join(folder, `.clock-${process.pid}-${Math.random().toString(36).slice(2)}`);
  const handle = await open(probe, "w");
  try {
    await handle.write("now");
    return (await handle.stat()).mtimeMs;
  } finally {
    await handle.close();
    await rm(probe, { force: true });
  }
}

export async function removeOrphanBlobs(db: Db, minAgeMs = ORPHAN_MIN_AGE_MS): Promise<number> {
  if (resultStoreKind() !== "file") return 0;
  const root = resultsDir();
  const folders = await readdir(root).catch(() => [] as string[]);
  if (folders.length === 0) return 0;
  const rows = await db.select({ location: sweepResults.location }).from(sweepResults).where(isNotNull(sweepResults.location));
  const referenced = new Set(rows.map((row) => row.location));
  // Ages are measured on the file system's clock (the mtime of a file written now), not this
  // process's: the two can disagree (a shared volume, a clock step), and a young blob taken for an
  // old one would be deleted while its chunk is being recorded.
  const cutoff = (await fileSystemNowMs(root)) - minAgeMs;
  let removed = 0;
  for (const folder of folders) {
    if (!SAFE_NAME.test(folder)) continue;
    const files = await readdir(path.join(root, folder)).catch(() => [] as string[]);
    let left = files.length;
    for (const file of files) {
      if (referenced.has(`${folder}/${file}`)) continue;
      const full = path.join(root, folder, file);
      const info = await stat(full).catch(() => null);
      if (!info?.isFile() || info.mtimeMs > cutoff) continue;
      await rm(full, { force: true });
      removed++;
      left--;
    }
    if (left === 0) {
      // rmdir refuses a folder that is not empty (a blob written meanwhile): it stays.
      await rmdir(path.join(root, folder)).catch(() => undefined);
      madeFolders.delete(path.join(root, folder));
    }
  }
  return removed;
}
