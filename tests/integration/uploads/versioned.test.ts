/**
 * Versioned uploads (lib/uploads/versioned.ts), on the snapshots table: each upload under a name is
 * that name's next version, per studio; uploads of one name at once all get a number, none lost; a
 * refusal by the (studio, name, version) index is retried, any other error is not.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, asc, eq } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import { newId } from "@/db/ids";
import { snapshots, type Snapshot } from "@/db/schema";
import { insertNextVersion, storedFile } from "@/lib/uploads/versioned";
import { closeTestDb, countRows, useFreshDb } from "../../helpers/db";
import { makeStudio } from "../../helpers/factories";

let db: Db;
let studioId: string;
let otherStudioId: string;

beforeAll(async () => {
  db = await useFreshDb();
  studioId = await makeStudio("Gannet Yard Games", []);
  otherStudioId = await makeStudio("Shingle Bay Games", []);
});
afterAll(async () => {
  await closeTestDb();
});

const FILE = new TextEncoder().encode('{"bodies":[]}');
const UNIQUE_INDEX = "snapshots_studio_name_version_uq";

async function insertSnapshot(tx: DbOrTx, studio: string, name: string, version: number): Promise<Snapshot> {
  const [row] = await tx
    .insert(snapshots)
    .values({ id: newId("snp"), studioId: studio, name, version, ...storedFile(FILE, "crate-stack.json", "snapshot.json"), scene: { kind: "snapshot", bodies: [], walls: [], gravityMPerS2: 0, speedScale: 1 }, bodyCount: 0, wallCount: 0 })
    .returning();
  return row;
}

function upload(studio: string, name: string): Promise<Snapshot> {
  return insertNextVersion(db, { table: snapshots, uniqueIndex: UNIQUE_INDEX, studioId: studio, name }, (tx, version) => insertSnapshot(tx, studio, name, version));
}

async function versionsOf(studio: string, name: string): Promise<number[]> {
  const rows = await db
    .select({ version: snapshots.version })
    .from(snapshots)
    .where(and(eq(snapshots.studioId, studio), eq(snapshots.name, name)))
    .orderBy(asc(snapshots.version));
  return rows.map((row) => row.version);
}

describe("versioned uploads", () => {
  it("numbers the uploads of a name 1, 2, 3, separately per name and per studio", async () => {
    expect((await upload(studioId, "Crate stack")).version).toBe(1);
    expect((await upload(studioId, "Crate stack")).version).toBe(2);
    expect((await upload(studioId, "Barrel row")).version).toBe(1);
    expect((await upload(otherStudioId, "Crate stack")).version).toBe(1);
    expect((await upload(studioId, "Crate stack")).version).toBe(3);
  });

  it("gives uploads of one name at once every number once, losing none", async () => {
    const rows = await Promise.all([0, 1, 2, 3].map(() => upload(studioId, "Coin fountain")));
    expect(rows.map((row) => row.version).sort()).toEqual([1, 2, 3, 4]);
    expect(await versionsOf(studioId, "Coin fountain")).toEqual([1, 2, 3, 4]);
  });

  it("runs an upload again when the unique index refuses its number, storing it once", async () => {
    const versions: number[] = [];
    const row = await insertNextVersion(db, { table: snapshots, uniqueIndex: UNIQUE_INDEX, studioId, name: "Plank bridge" }, async (tx, version) => {
      versions.push(version);
      const stored = await insertSnapshot(tx, studioId, "Plank bridge", version);
      // The first time, a second row with the same number: the database refuses it as another upload's would be.
      if (versions.length === 1) await insertSnapshot(tx, studioId, "Plank bridge", version);
      return stored;
    });
    expect(versions).toEqual([1, 1]);
    expect(row.version).toBe(1);
    expect(await versionsOf(studioId, "Plank bridge")).toEqual([1]);
  });

  it("gives up after three refused attempts and stores nothing", async () => {
    const before = await countRows(db, snapshots);
    let attempts = 0;
    const refused = insertNextVersion(db, { table: snapshots, uniqueIndex: UNIQUE_INDEX, studioId, name: "Jammed door" }, async (tx, version) => {
      attempts += 1;
      await insertSnapshot(tx, studioId, "Jammed door", version);
      return insertSnapshot(tx, studioId, "Jammed door", version);
    });
    await expect(refused).rejects.toThrow();
    expect(attempts).toBe(3);
    expect(await countRows(db, snapshots)).toBe(before);
  });

  it("throws any other error at once, without running the upload again", async () => {
    let attempts = 0;
    const failed = insertNextVersion(db, { table: snapshots, uniqueIndex: UNIQUE_INDEX, studioId, name: "Loose hinge" }, async () => {
      attempts += 1;
      throw new Error("disk full");
    });
    await expect(failed).rejects.toThrow("disk full");
    expect(attempts).toBe(1);
  });

  it("stores the file's bytes as base64 with their SHA-256, and a file name without control characters", () => {
    const bytes = new TextEncoder().encode("abc");
    expect(storedFile(bytes, "crates\u0000\n.csv", "catalogue")).toEqual({
      // SHA-256 of "abc": NIST FIPS 180-2 (2002), appendix B.1 test vector; base64 of "abc": RFC 4648 (2006), section 4.
      contentHash: "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
      fileName: "crates.csv",
      fileBase64: "YWJj",
      fileBytes: 3,
    });
    expect(storedFile(bytes, "\u0007\u0001", "catalogue").fileName).toBe("catalogue");
    expect(storedFile(bytes, "x".repeat(300) + ".csv", "catalogue").fileName).toHaveLength(200);
  });
});
