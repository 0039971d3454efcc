/**
 * The one store of versioned uploads (catalogues, snapshots): files kept as numbered versions of a
 * name within a studio, the uploaded bytes kept as they came (base64, with their SHA-256 and a safe
 * file name). A kind (lib/catalogues/store.ts, lib/snapshots/store.ts) is a table plus its wording
 * and limits; it parses its own file format and adds its own columns, and everything else — name
 * and size rules, the next version's insert, the listing, the studio-scoped reads, every version of
 * a name, the stored bytes, the problem report and the download — is here once.
 */
import "server-only";
import { createHash } from "node:crypto";
import { and, asc, desc, eq, max } from "drizzle-orm";
import type { AnyPgColumn, PgTable } from "drizzle-orm/pg-core";
import type { Db, DbOrTx } from "@/db/client";
import { newId, type IdPrefix } from "@/db/ids";
import { ApiError, type ErrorCode, type FieldIssue } from "@/lib/errors";
import { formatLimit } from "@/lib/sweeps/parameters";

/** SHA-256 (hex) of a file's bytes. */
export function contentHash(bytes: Uint8Array): string {
  return createHash("sha256").update(bytes).digest("hex");
}

/** The columns every versioned upload stores about its file. */
interface StoredFile {
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

/** A table of versioned uploads: a (studio, name, version) unique index over these columns, and the stored file. */
export type VersionedTable = PgTable & {
  id: AnyPgColumn<{ data: string }>;
  studioId: AnyPgColumn<{ data: string }>;
  name: AnyPgColumn<{ data: string }>;
  version: AnyPgColumn<{ data: number }>;
};

/** The fields every kind's row has (the stored file and its place among the name's versions). */
interface VersionedRow extends StoredFile {
  id: string;
  studioId: string;
  name: string;
  version: number;
  createdAt: Date;
}

/** What every kind's summary says about one version (each kind adds its own counts). */
export interface VersionSummary {
  id: string;
  name: string;
  version: number;
  contentHash: string;
  fileName: string;
  fileBytes: number;
  createdAt: string;
}

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

/** One kind of versioned upload: its table and the words and limits its messages use. */
export interface UploadKind<T extends VersionedTable> {
  table: T;
  /** The table's unique (studio_id, name, version) index, whose refusal means "another upload took that number". */
  uniqueIndex: string;
  /** The prefix of the rows' ids (db/ids.ts). */
  idPrefix: IdPrefix;
  /** The kind in words, lower case ("catalogue"): "Catalogue not found.", "The catalogue was not saved. …". */
  noun: string;
  /** The error code of a file with problems ("invalid_catalogue"). */
  problemsCode: ErrorCode;
  /** The file name stored when the uploaded one has nothing left after control characters are removed. */
  fallbackFileName: string;
  maxFileBytes: number;
  /** The size limit as people say it ("256 KiB"), after the exact number of bytes. */
  maxFileText: string;
  maxNameLength: number;
  /** The message when no name is left: says where a name may come from. */
  nameMissing: string;
}

/** Insert values of a kind's table, without what the store fills in itself (id, studio, name, version). */
type KindValues<T extends VersionedTable> = Omit<T["$inferInsert"], "id" | "studioId" | "name" | "version">;

/**
 * The store of one kind. Rows read back are the table's own row type; drizzle cannot follow a
 * generic table through a select, so the one cast from its rows to `T["$inferSelect"]` is here.
 */
export function versionedUploads<T extends VersionedTable>(kind: UploadKind<T>) {
  type Row = T["$inferSelect"] & VersionedRow;
  const notFound = () => new ApiError("not_found", `${kind.noun[0].toUpperCase()}${kind.noun.slice(1)} not found.`);

  return {
    kind,

    /** Refuses a file over the kind's limit with a 413 naming the form field. */
    checkSize(bytes: Uint8Array, field = "file"): void {
      if (bytes.length > kind.maxFileBytes) {
        throw new ApiError("payload_too_large", `${field}: ${formatLimit(bytes.length)} bytes exceed the limit of ${formatLimit(kind.maxFileBytes)} bytes (${kind.maxFileText}).`, field);
      }
    },

    /** The name a version is stored under: the given one, else the file name without its extension; trimmed and checked. */
    nameOf(given: string | undefined, fileName: string): string {
      const name = (given ?? fileName.replace(/\.[^.]*$/, "")).trim();
      if (/[\u0000-\u001f\u007f]/.test(name)) throw new ApiError("validation_failed", "name: must not hold control characters (tab, line break, NUL).", "name");
      if (name === "") throw new ApiError("validation_failed", `name: ${kind.nameMissing}`, "name");
      if (name.length > kind.maxNameLength) throw new ApiError("validation_failed", `name: at most ${kind.maxNameLength} characters; got ${name.length}.`, "name");
      return name;
    },

    /** The stored-file columns of an upload. */
    file(bytes: Uint8Array, fileName: string): StoredFile {
      return storedFile(bytes, fileName, kind.fallbackFileName);
    },

    /**
     * Every problem of a file as one 422: `fieldOf` gives each issue's field (for API clients),
     * `describe` the words people read; the message sums up the first three.
     */
    problemsError<P>(problems: readonly P[], fieldOf: (problem: P) => string, describe: (problem: P) => string, message: (problem: P) => string = describe): ApiError {
      const issues: FieldIssue[] = problems.map((problem) => ({ field: fieldOf(problem), message: message(problem) }));
      const summary = problems.length === 1 ? describe(problems[0]) : `${problems.length} problems: ${problems.slice(0, 3).map(describe).join("; ")}${problems.length > 3 ? "; …" : ""}`;
      return new ApiError(kind.problemsCode, `The ${kind.noun} was not saved. ${summary}`, issues[0]?.field ?? "file", issues);
    },

    /** Stores `values` as the next version of `name` in the studio (see insertNextVersion). */
    insert(db: Db, studioId: string, name: string, values: KindValues<T>): Promise<Row> {
      return insertNextVersion(db, { table: kind.table, uniqueIndex: kind.uniqueIndex, studioId, name }, async (tx, version) => {
        const row = { ...values, id: newId(kind.idPrefix), studioId, name, version } as T["$inferInsert"];
        const [stored] = (await tx.insert(kind.table).values(row).returning()) as Row[];
        return stored;
      });
    },

    /** Every version of every name in the studio: by name, newest version first. */
    async list(db: Db, studioId: string): Promise<Row[]> {
      const { table } = kind;
      return (await db.select().from(table as PgTable).where(eq(table.studioId, studioId)).orderBy(asc(table.name), desc(table.version))) as Row[];
    },

    /** One version by its id, only within the studio: another studio's id finds nothing, as an unknown one. */
    async find(db: Db, studioId: string, id: string): Promise<Row | null> {
      const { table } = kind;
      const [row] = (await db.select().from(table as PgTable).where(and(eq(table.id, id), eq(table.studioId, studioId)))) as Row[];
      return row ?? null;
    },

    /** `find`, with nothing found as a 404 ("Catalogue not found."). */
    async ofStudio(db: Db, studioId: string, id: string): Promise<Row> {
      const row = await this.find(db, studioId, id);
      if (!row) throw notFound();
      return row;
    },

    /** Every version of a row's name, newest first (the latest is the first). */
    async versionsOf(db: Db, row: Pick<Row, "studioId" | "name">): Promise<Row[]> {
      const { table } = kind;
      return (await db.select().from(table as PgTable).where(and(eq(table.studioId, row.studioId), eq(table.name, row.name))).orderBy(desc(table.version))) as Row[];
    },
  };
}

/** What a kind's summary shares with every other kind's. */
export function versionSummary(row: VersionedRow): VersionSummary {
  return {
    id: row.id,
    name: row.name,
    version: row.version,
    contentHash: row.contentHash,
    fileName: row.fileName,
    fileBytes: row.fileBytes,
    createdAt: row.createdAt.toISOString(),
  };
}

/** Stored bytes (base64 in the row) as they were uploaded. */
export function storedBytes(fileBase64: string): Uint8Array {
  return new Uint8Array(Buffer.from(fileBase64, "base64"));
}

/** A version's file: its name, its bytes exactly as stored, their SHA-256. */
export function fileOf(row: Pick<VersionedRow, "fileName" | "fileBase64" | "contentHash">): { fileName: string; bytes: Uint8Array; contentHash: string } {
  return { fileName: row.fileName, bytes: storedBytes(row.fileBase64), contentHash: row.contentHash };
}
