/**
 * Versioned uploads (lib/uploads/versioned.ts), on the snapshots table: each upload under a name is
 * that name's next version, per studio; uploads of one name at once all get a number, none lost; a
 * refusal by the (studio, name, version) index is retried, any other error is not. Then the store
 * of a kind (catalogues and snapshots are two of them): listing, studio-scoped reads, every version
 * of a name, the bytes given back as stored, the name and size rules in the kind's words.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { and, asc, eq } from "drizzle-orm";
import type { Db, DbOrTx } from "@/db/client";
import { newId } from "@/db/ids";
import { snapshots, type Snapshot } from "@/db/schema";
import { catalogueUploads } from "@/lib/catalogues/store";
import { snapshotUploads } from "@/lib/snapshots/store";
import { fileOf, insertNextVersion, storedFile } from "@/lib/uploads/versioned";
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

describe("the store of a kind", () => {
  const SCENE = { kind: "snapshot" as const, bodies: [], walls: [], gravityMPerS2: 0, speedScale: 1 };
  const store = (studio: string, name: string, text: string) =>
    snapshotUploads.insert(db, studio, name, { ...snapshotUploads.file(new TextEncoder().encode(text), `${name}.json`), scene: SCENE, bodyCount: 0, wallCount: 0, createdByUserId: null });

  it("lists a studio's versions by name, newest first, and reads one only within its studio", async () => {
    const studio = await makeStudio("Tern Point Games", []);
    const first = await store(studio, "Pallet row", "1");
    const second = await store(studio, "Pallet row", "2");
    const other = await store(studio, "Anvil drop", "3");
    expect(first.id).toMatch(/^snp_/);
    expect((await snapshotUploads.list(db, studio)).map((row) => `${row.name} v${row.version}`)).toEqual(["Anvil drop v1", "Pallet row v2", "Pallet row v1"]);
    expect((await snapshotUploads.versionsOf(db, first)).map((row) => row.id)).toEqual([second.id, first.id]);
    expect((await snapshotUploads.ofStudio(db, studio, other.id)).name).toBe("Anvil drop");
    // Another studio's id reads as an unknown one: nothing says it exists.
    await expect(snapshotUploads.ofStudio(db, otherStudioId, other.id)).rejects.toMatchObject({ code: "not_found", message: "Snapshot not found." });
    expect(await snapshotUploads.find(db, otherStudioId, other.id)).toBeNull();
    await expect(catalogueUploads.ofStudio(db, studio, "cat_unknown")).rejects.toMatchObject({ code: "not_found", message: "Catalogue not found." });
  });

  it("gives the bytes back exactly as uploaded, with their hash", async () => {
    const text = '{"name":"Ramp \u00e9","bodies":[]}\r\n';
    const row = await store(otherStudioId, "Byte check", text);
    const file = fileOf(await snapshotUploads.ofStudio(db, otherStudioId, row.id));
    expect(new TextDecoder().decode(file.bytes)).toBe(text);
    expect(file).toMatchObject({ fileName: "Byte check.json", contentHash: row.contentHash });
  });

  it("checks names and sizes in the kind's words and limits", () => {
    expect(catalogueUploads.nameOf(undefined, "  crates.v2.csv")).toBe("crates.v2");
    expect(snapshotUploads.nameOf("  Loading bay ", "x.json")).toBe("Loading bay");
    expect(() => snapshotUploads.nameOf("", "x.json")).toThrow("name: a snapshot needs a name (in the form, in the file, or from the file name).");
    expect(() => catalogueUploads.nameOf(undefined, ".csv")).toThrow("name: a catalogue needs a name (or a file name to take it from).");
    expect(() => catalogueUploads.nameOf("a\tb", "x.csv")).toThrow("name: must not hold control characters");
    const long = "n".repeat(snapshotUploads.kind.maxNameLength + 1);
    expect(() => snapshotUploads.nameOf(long, "x.json")).toThrow(`name: at most ${snapshotUploads.kind.maxNameLength} characters; got ${long.length}.`);
    // 256 KiB and 4 MiB: the limits lib/catalogues/format.ts and lib/snapshots/format.ts state.
    expect(() => catalogueUploads.checkSize(new Uint8Array(256 * 1024))).not.toThrow();
    expect(() => catalogueUploads.checkSize(new Uint8Array(256 * 1024 + 1), "original")).toThrow("original: 262,145 bytes exceed the limit of 262,144 bytes (256 KiB).");
    expect(() => snapshotUploads.checkSize(new Uint8Array(4 * 1024 * 1024 + 1))).toThrow("file: 4,194,305 bytes exceed the limit of 4,194,304 bytes (4 MiB).");
  });
});
