/**
 * The snapshot API through its route handlers: uploads (every problem with its JSON path, the limits
 * stated, nothing stored on error; versions, hash and the original bytes), and a sweep over a stored
 * snapshot submitted through the plain sweep route, run by the queue runner to its verdicts.
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { snapshots, sweeps } from "@/db/schema";
import { eq } from "drizzle-orm";
import { storedCells } from "@/lib/queue/views";
import { simulate } from "@/lib/physics";
import { expandSweep } from "@/lib/sweeps/grid";
import { parseSweepSpec } from "@/lib/sweeps/spec";
import { contentHash } from "@/lib/catalogues/store";
import { CRATESLIDE_SNAPSHOT_JSON, CRATESLIDE_SNAPSHOT_NAME } from "@/lib/snapshots/demo";
import { listSnapshots } from "@/lib/snapshots/store";
import { seedDemo } from "@/server/seed";
import * as snapshotsRoute from "@/app/api/v1/studios/[studioId]/snapshots/route";
import * as snapshotRoute from "@/app/api/v1/studios/[studioId]/snapshots/[snapshotId]/route";
import * as fileRoute from "@/app/api/v1/studios/[studioId]/snapshots/[snapshotId]/file/route";
import * as sweepsRoute from "@/app/api/v1/studios/[studioId]/sweeps/route";
import * as quotesRoute from "@/app/api/v1/studios/[studioId]/quotes/route";
import { countRows } from "../../helpers/db";
import { buildRequest, call, errorOf } from "../../helpers/http";
import { startSweepRunner, stopSweepRunner, waitForSweep, type TestStudio } from "../sweeps/support";

let db: Db;
let studio: TestStudio;
let rival: TestStudio;

beforeAll(async () => ({ db, studios: [studio, rival] } = await startSweepRunner("Gannet Snapshot Yard", "Shingle Bay Games")));
afterAll(stopSweepRunner);

const base = (s: TestStudio) => `/api/v1/studios/${s.studioId}/snapshots`;

function form(content: string | Uint8Array, fileName: string, name?: string): FormData {
  const data = new FormData();
  data.set("file", new Blob([content as BlobPart], { type: "application/json" }), fileName);
  if (name) data.set("name", name);
  return data;
}

async function upload(s: TestStudio, body: FormData | string, cookie = s.cookies.engineer) {
  return call(snapshotsRoute.POST, { method: "POST", path: base(s), params: { studioId: s.studioId }, body, cookie });
}

const disc = (xM: number, extra: Record<string, unknown> = {}) => ({ xM, yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 1, radiusM: 0.1, ...extra });

describe("snapshot uploads", () => {
  it("answers a file with several mistakes with every one, by JSON path, and stores nothing", async () => {
    const bad = JSON.stringify({ bodies: [disc(0, { massKg: -2 }), disc(1, { radiusM: "big" }), disc(2, { spin: 3 })], walls: [{ normalX: 0, normalY: 0, offsetM: 0 }] });
    const before = await countRows(db, snapshots);
    const { status, body } = await upload(studio, form(bad, "bad.json"));
    expect(status).toBe(422);
    const error = errorOf(body);
    expect(error.code).toBe("invalid_snapshot");
    expect(error.issues?.map((issue) => issue.field)).toEqual(["file.bodies.0.massKg", "file.bodies.1.radiusM", "file.bodies.2.spin", "file.walls.0.normalX"]);
    expect(error.issues?.[0].message).toBe("mass must be > 0 and ≤ 1,000,000 (kg); got -2");
    // The message a person reads names each place as the upload page does: discs and walls counted from 1, fields in words.
    expect(error.message).toMatch(/^The snapshot was not saved\. 4 problems: Disc 1, mass \(massKg\): mass must be > 0 and ≤ 1,000,000 \(kg\); got -2; Disc 2, radius \(radiusM\): radius must be a finite number \(m\); got a string; Disc 3, spin: unknown field "spin"; …$/);
    expect(error.message).not.toMatch(/bodies\.\d/);
    // Overlaps are named by body index, also beside problems of other fields (body 1 has a word for a speed).
    const both = await upload(studio, form(JSON.stringify({ bodies: [disc(0), disc(3, { vxMPerS: "fast" }), disc(0.1)] }), "stack.json"));
    expect(errorOf(both.body).issues).toEqual([
      { field: "file.bodies.1.vxMPerS", message: "x velocity must be a finite number (m/s); got a string" },
      { field: "file.bodies.0", message: "discs 1 and 3 start overlapping by 100% of the smaller radius (tolerance 1%)" },
    ]);
    // Overlaps are named by body index.
    const overlapping = await upload(studio, form(JSON.stringify({ bodies: [disc(0), disc(3), disc(0.1)] }), "stack.json"));
    expect(errorOf(overlapping.body).issues).toEqual([{ field: "file.bodies.0", message: "discs 1 and 3 start overlapping by 100% of the smaller radius (tolerance 1%)" }]);
    expect(await countRows(db, snapshots)).toBe(before);
  });

  it("states the limits: 10,000 bodies, 4 MiB per file; not JSON is a 422 and another media type a 415", async () => {
    const many = JSON.stringify({ bodies: Array.from({ length: 10_001 }, (_, i) => [(i % 100) * 0.3, Math.floor(i / 100) * 0.3]).map(([x, y]) => [x, y, 0, 0, 1, 0.1]) });
    // Arrays instead of objects: one problem per body would be 10,001; the limit is named first.
    const tooMany = await upload(studio, form(many, "many.json"));
    expect(tooMany.status).toBe(422);
    const issues = errorOf(tooMany.body).issues ?? [];
    expect(issues[0]).toEqual({ field: "file.bodies", message: "10,001 bodies exceed the limit of 10,000 bodies per scene" });
    expect(issues).toHaveLength(1);
    // 150 discs with a negative mass: the first 100 problems are listed, the rest counted.
    const negative = JSON.stringify({ bodies: Array.from({ length: 150 }, (_, i) => disc(i, { massKg: -1 })) });
    const listed = errorOf((await upload(studio, form(negative, "negative.json"))).body).issues ?? [];
    expect(listed).toHaveLength(101);
    expect(listed[99].field).toBe("file.bodies.99.massKg");
    expect(listed[100]).toEqual({ field: "file", message: "and 50 more problems not listed" });
    const big = await upload(studio, form(new Uint8Array(4 * 1024 * 1024 + 1).fill(0x20), "big.json"));
    expect(big.status).toBe(413);
    expect(errorOf(big.body).message).toMatch(/4,194,304 bytes \(4 MiB\)/);
    const notJson = await upload(studio, form("{ bodies: [", "broken.json"));
    expect(notJson.status).toBe(422);
    expect(errorOf(notJson.body).issues?.[0]).toMatchObject({ field: "file", message: expect.stringMatching(/^the file is not valid JSON/) });
    const text = await call(snapshotsRoute.POST, { method: "POST", path: base(studio), params: { studioId: studio.studioId }, body: "x", headers: { "content-type": "text/plain" }, cookie: studio.cookies.engineer });
    expect(text.status).toBe(415);
    expect(await countRows(db, snapshots)).toBe(0);
  });

  it("stores valid uploads (multipart or a JSON body) as versions of a name with their hash, and gives the original bytes back", async () => {
    const first = await upload(studio, form(CRATESLIDE_SNAPSHOT_JSON, "bay.json"));
    expect(first.status).toBe(201);
    const v1 = (first.body as { snapshot: { id: string; name: string; version: number; contentHash: string; bodyCount: number; wallCount: number } }).snapshot;
    // The name comes from the file's "name"; the hash is the SHA-256 of the bytes as sent.
    expect([v1.name, v1.version, v1.bodyCount, v1.wallCount]).toEqual([CRATESLIDE_SNAPSHOT_NAME, 1, 41, 4]);
    expect(v1.contentHash).toBe(contentHash(new TextEncoder().encode(CRATESLIDE_SNAPSHOT_JSON)));
    const second = await call(snapshotsRoute.POST, { method: "POST", path: base(studio), params: { studioId: studio.studioId }, body: CRATESLIDE_SNAPSHOT_JSON.replace('"massKg": 25', '"massKg": 26'), cookie: studio.cookies.engineer });
    expect(second.status).toBe(201);
    expect((second.body as { snapshot: { version: number } }).snapshot.version).toBe(2);

    const res = await fileRoute.GET(buildRequest({ path: `${base(studio)}/${v1.id}/file`, cookie: studio.cookies.finance }), { params: Promise.resolve({ studioId: studio.studioId, snapshotId: v1.id }) });
    expect(res.status).toBe(200);
    expect(new TextDecoder().decode(await res.arrayBuffer())).toBe(CRATESLIDE_SNAPSHOT_JSON);
    expect(res.headers.get("x-content-sha256")).toBe(v1.contentHash);

    const detail = await call(snapshotRoute.GET, { path: `${base(studio)}/${v1.id}`, params: { studioId: studio.studioId, snapshotId: v1.id }, cookie: studio.cookies.finance });
    expect((detail.body as { snapshot: { versions: { version: number }[] } }).snapshot.versions.map((v) => v.version)).toEqual([2, 1]);
    const listed = await call(snapshotsRoute.GET, { path: base(studio), params: { studioId: studio.studioId }, cookie: studio.cookies.finance });
    expect((listed.body as { snapshots: unknown[] }).snapshots).toHaveLength(2);
    const foreign = await call(snapshotRoute.GET, { path: `${base(rival)}/${v1.id}`, params: { studioId: rival.studioId, snapshotId: v1.id }, cookie: rival.cookies.owner });
    expect(foreign.status).toBe(404);
  });
});

describe("a sweep over a stored snapshot", () => {
  it("is submitted from the snapshot's starting spec and runs through the queue to a verdict per cell", async () => {
    const uploaded = await upload(studio, form(CRATESLIDE_SNAPSHOT_JSON, "bay.json", "Bay for a sweep"));
    const id = (uploaded.body as { snapshot: { id: string } }).snapshot.id;
    const detail = await call(snapshotRoute.GET, { path: `${base(studio)}/${id}`, params: { studioId: studio.studioId, snapshotId: id }, cookie: studio.cookies.engineer });
    const spec = (detail.body as { sweepSpec: { scenario: { durationS: number; scene: { kind: string; bodies: unknown[] } }; axes: { count?: number; values?: number[] }[] } }).sweepSpec;
    expect(spec.scenario.scene.kind).toBe("snapshot");
    expect(spec.scenario.scene.bodies).toHaveLength(41);
    // A small map for the test: 2 × 2 cells of a quarter second.
    spec.scenario.durationS = 0.25;
    for (const axis of spec.axes) {
      if (axis.values) axis.values = axis.values.slice(-2);
      else axis.count = 2;
    }
    const submitted = await call(sweepsRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/sweeps`, params: { studioId: studio.studioId }, body: { spec }, cookie: studio.cookies.engineer });
    expect(submitted.status).toBe(201);
    const sweep = (submitted.body as { sweep: { id: string } }).sweep;
    const done = await waitForSweep(sweep.id, (row) => row.status === "done");
    expect(done.cellsDone).toBe(4);
    // Each stored verdict is the engine's own for that cell (deterministic: the spec carries the scene inline).
    const [row] = await db.select().from(sweeps).where(eq(sweeps.id, sweep.id));
    const rows = await storedCells(db, row);
    const parsed = parseSweepSpec(done.spec);
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
    expect(rows.map((row) => [row.verdict, row.reason])).toEqual(expandSweep(parsed.spec).map((cell) => { const run = simulate(cell.scenario); return [run.verdict, run.reason]; }));
  });
});

describe("the first sweep suggested from an uploaded scene", () => {
  it("places its axes from the scene, says why, and run unchanged through the queue has stable cells and reaches the instability on both sides", async () => {
    // A demo-like scene of our own: a block of 3 × 3 crates (20 kg, r 0.25 m) that a 40 kg cart at 5 m/s runs into, in a walled yard.
    const bodies = [
      ...Array.from({ length: 9 }, (_, k) => ({ xM: 2 + (k % 3) * 0.52, yM: 2 + Math.floor(k / 3) * 0.52, vxMPerS: 0, vyMPerS: 0, massKg: 20, radiusM: 0.25 })),
      { xM: 6, yM: 2.52, vxMPerS: -5, vyMPerS: 0, massKg: 40, radiusM: 0.3 },
    ];
    const walls = [{ normalX: 1, normalY: 0, offsetM: 0 }, { normalX: -1, normalY: 0, offsetM: -8 }, { normalX: 0, normalY: 1, offsetM: 0 }, { normalX: 0, normalY: -1, offsetM: -5 }];
    const uploaded = await upload(studio, form(JSON.stringify({ name: "Yard cart", bodies, walls }), "yard.json"));
    expect(uploaded.status).toBe(201);
    const id = (uploaded.body as { snapshot: { id: string } }).snapshot.id;
    const detail = await call(snapshotRoute.GET, { path: `${base(studio)}/${id}`, params: { studioId: studio.studioId, snapshotId: id }, cookie: studio.cookies.engineer });
    expect(detail.status).toBe(200);
    const { sweepSpec, sweepSuggestion } = detail.body as {
      sweepSpec: { scenario: { contact: { stiffness: number } }; axes: { parameter: string; from?: number; to?: number; values?: number[] }[] };
      sweepSuggestion: { basis: string; stiffnessNPerM: number; impact: { body: number; other: number | null; effectiveMassKg: number; closingSpeedMPerS: number; radiusM: number }; reasoning: string[] };
    };
    expect(sweepSuggestion.basis).toBe("derived");
    // The cart (disc 10) against a crate: m* = 40·20/60 = 13.3 kg at 5 m/s, judged against the crate's 0.25 m.
    expect(sweepSuggestion.impact).toMatchObject({ other: 9, closingSpeedMPerS: 5, radiusM: 0.25 });
    expect(sweepSuggestion.impact.effectiveMassKg).toBeCloseTo(40 / 3, 12);
    // k = m*·v² / (0.05·r)² = 13.33 · 25 / 0.0125² = 2.13 MN/m (δ_max = v·√(m*/k), Luding 2008), to two figures.
    expect(sweepSuggestion.stiffnessNPerM).toBe(2_100_000);
    expect(sweepSpec.scenario.contact.stiffness).toBe(2_100_000);
    expect(sweepSpec.axes[0]).toMatchObject({ parameter: "contact.stiffness", from: 70_000, to: 6_300_000 });
    expect(sweepSpec.axes[1].parameter).toBe("dtS");
    expect(sweepSpec.axes[1].values?.at(-1)).toBe(1 / 60);
    expect(sweepSuggestion.reasoning.join("\n")).toMatch(/Hardest impact: disc \d and disc 10, closing at up to 5 m\/s with effective mass 13\.3 kg/);
    expect(sweepSuggestion.reasoning.join("\n")).toContain("needs k ≥ 2.13 MN/m");

    const submitted = await call(sweepsRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/sweeps`, params: { studioId: studio.studioId }, body: { spec: sweepSpec }, cookie: studio.cookies.engineer });
    expect(submitted.status).toBe(201);
    const done = await waitForSweep((submitted.body as { sweep: { id: string } }).sweep.id, (row) => row.status === "done");
    const [row] = await db.select().from(sweeps).where(eq(sweeps.id, done.id));
    const cells = await storedCells(db, row);
    const verdicts = cells.map((cell) => cell.verdict);
    expect(verdicts.filter((verdict) => verdict === "stable").length).toBeGreaterThanOrEqual(3);
    // The softest spring at the finest step sinks too deep; the stiffest at the game's 1/60 s breaks the step bound.
    expect(cells[0].verdict).toBe("deep-overlap");
    expect(["step-unstable", "exploded"]).toContain(cells[cells.length - 1].verdict);
  });
});

describe("a sweep naming a stored snapshot by id", () => {
  it("is quoted and stored with the snapshot's discs written in; an id of another studio is a 422 naming the field", async () => {
    const uploaded = await upload(studio, form(CRATESLIDE_SNAPSHOT_JSON, "bay.json", "Bay by reference"));
    const id = (uploaded.body as { snapshot: { id: string } }).snapshot.id;
    const spec = (snapshotId: string) => ({
      scenario: { scene: { kind: "snapshot", snapshotId, speedScale: 2 }, contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.5 } }, integrator: "velocity-verlet", dtS: 1 / 240, durationS: 0.1 },
      axes: [{ parameter: "dtS", values: [1 / 240, 1 / 480] }],
    });
    const quoted = await call(quotesRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/quotes`, params: { studioId: studio.studioId }, body: { spec: spec(id) }, cookie: studio.cookies.engineer });
    expect(quoted.status).toBe(200);
    expect((quoted.body as { quote: { cells: number } }).quote.cells).toBe(2);
    const submitted = await call(sweepsRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/sweeps`, params: { studioId: studio.studioId }, body: { spec: spec(id) }, cookie: studio.cookies.engineer });
    expect(submitted.status).toBe(201);
    const done = await waitForSweep((submitted.body as { sweep: { id: string } }).sweep.id, (row) => row.status === "done");
    const scene = (done.spec as { scenario: { scene: { bodies: unknown[]; walls: unknown[]; speedScale: number; snapshotId?: string } } }).scenario.scene;
    expect([scene.bodies.length, scene.walls.length, scene.speedScale, scene.snapshotId]).toEqual([41, 4, 2, undefined]);
    const foreign = await call(sweepsRoute.POST, { method: "POST", path: `/api/v1/studios/${rival.studioId}/sweeps`, params: { studioId: rival.studioId }, body: { spec: spec(id) }, cookie: rival.cookies.owner });
    expect(foreign.status).toBe(422);
    expect(errorOf(foreign.body).field).toBe("spec.scenario.scene.snapshotId");
  });
});

describe("the demo and the example", () => {
  it("seeds the loading bay once; examples/snapshots holds the same bytes", async () => {
    const { studioId } = await seedDemo(db);
    await seedDemo(db);
    expect((await listSnapshots(db, studioId)).map((s) => [s.name, s.version, s.bodyCount])).toEqual([[CRATESLIDE_SNAPSHOT_NAME, 1, 41]]);
    expect(readFileSync(path.join(process.cwd(), "examples", "snapshots", "crateslide-loading-bay.json"), "utf8")).toBe(CRATESLIDE_SNAPSHOT_JSON);
  });
});
