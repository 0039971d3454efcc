/**
 * Uploaded files kept as numbered versions of a name within a studio (catalogues, snapshots): the
 * stored fields of a file (its bytes as base64, their SHA-256, a safe file name) and the insert of
 * the name's next version, retried when two uploads of one name land at once.
 */
import { createHash } from "node:crypto";
import { and, eq, max } from "drizzle-orm";
import type { AnyPgColumn, PgTable } from "drizzle-orm/pg-core";
import type { Db, DbOrTx } from "@/db/client";

/** SHA-256 (hex) of a file's bytes. */
export function contentHash(bytes: Uint8Array): string {
  return createHash("sha256").update(bytes).digest("hex");
}

/** The columns every versioned upload stores about its file. */
export interface StoredFile {
  contentHash: string;
  /** The uploaded file name without control characters, at most 200 characters; `fallback` when nothing is left. */
  fileName: string;
  fileBase64: string;
  fileBytes: number;
}

export function storedFile(bytes: Uint8Array, fileName: string, fallback: string): StoredFile {
  return {
    contentHash: contentHash(bytes),
    fileName: fileName.replace(/[\u0000-\u001f\u007f]/g, "").slice(0, 200) || fallback,
    fileBase64: Buffer.from(bytes).toString("base64"),
    fileBytes: bytes.length,
  };
}

/** A table of versioned uploads: a (studio, name, version) unique index over these columns. */
export type VersionedTable = PgTable & {
  studioId: AnyPgColumn<{ data: string }>;
  name: AnyPgColumn<{ data: string }>;
  version: AnyPgColumn<{ data: number }>;
};

/** Attempts before a conflict on the version number is given up (two retries). */
const ATTEMPTS = 3;

/**
 * Inserts a row as the next version of `name` in the studio: in one transaction, reads the highest
 * version stored under the name and calls `insert` with that plus one (1 for a new name). Two
 * uploads of one name at once: the unique (studio, name, version) index `uniqueIndex` refuses the
 * second, which is run again and takes the next number; any other error is thrown as it is.
 */
export async function insertNextVersion<Row>(
  db: Db,
  target: { table: VersionedTable; uniqueIndex: string; studioId: string; name: string },
  insert: (tx: DbOrTx, version: number) => Promise<Row>,
): Promise<Row> {
  const { table, uniqueIndex, studioId, name } = target;
  const conflict = new RegExp(`${uniqueIndex}|duplicate key`);
  for (let attempt = 1; ; attempt++) {
    try {
      return await db.transaction(async (tx) => {
        const [{ latest }] = await tx
          .select({ latest: max(table.version) })
          .from(table)
          .where(and(eq(table.studioId, studioId), eq(table.name, name)));
        return insert(tx, (latest ?? 0) + 1);
      });
    } catch (error) {
      if (attempt < ATTEMPTS && conflict.test(String((error as { cause?: unknown }).cause ?? error))) continue;
      throw error;
    }
  }
}
