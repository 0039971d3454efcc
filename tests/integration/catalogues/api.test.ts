/**
 * The catalogue API through its route handlers: uploads (all problems at once, nothing stored;
 * limits; versions; the original bytes back with their hash), and a check that goes through quote →
 * submit → queue runner → ledger like any sweep, read back as a pair matrix and exports.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { catalogueChecks, catalogues, sweeps } from "@/db/schema";
import { CRATESLIDE_CATALOGUE_CSV } from "@/lib/catalogues/demo";
import { contentHash, listCatalogues } from "@/lib/catalogues/store";
import { seedDemo } from "@/server/seed";
import * as cataloguesRoute from "@/app/api/v1/studios/[studioId]/catalogues/route";
import * as catalogueRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/route";
import * as fileRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/file/route";
import * as quoteRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/quote/route";
import * as checksRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/checks/route";
import * as checkRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/checks/[checkId]/route";
import * as exportRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/checks/[checkId]/export/route";
import * as quotesRoute from "@/app/api/v1/studios/[studioId]/quotes/route";
import { LANTERNFALL_FRICTION_CSV } from "../../helpers/catalogue-files";
import { countRows } from "../../helpers/db";
import { buildRequest, call, errorOf } from "../../helpers/http";
import { startSweepRunner, stopSweepRunner, usageEntries, waitForSweep, type TestStudio } from "../sweeps/support";

let db: Db;
let studio: TestStudio;
let rival: TestStudio;

beforeAll(async () => ({ db, studios: [studio, rival] } = await startSweepRunner("Gannet Test Yard", "Shingle Bay Games")));
afterAll(stopSweepRunner);

const base = (s: TestStudio) => `/api/v1/studios/${s.studioId}/catalogues`;

function form(content: string | Uint8Array, fileName: string, name?: string): FormData {
  const data = new FormData();
  data.set("file", new Blob([content as BlobPart], { type: fileName.endsWith(".json") ? "application/json" : "text/csv" }), fileName);
  if (name) data.set("name", name);
  return data;
}

async function upload(s: TestStudio, data: FormData, cookie = s.cookies.engineer) {
  return call(cataloguesRoute.POST, { method: "POST", path: base(s), params: { studioId: s.studioId }, body: data, cookie });
}

const SETTINGS = { dtS: 1 / 60, substeps: 16, integrator: "symplectic-euler", stiffness: 1_500_000, speedSteps: 3, offsets: [0] };

describe("uploads", () => {
  it("answers a file with three mistakes with all three, by row and column, and stores nothing", async () => {
    const bad = CRATESLIDE_CATALOGUE_CSV.replace("coin,0.6,", "coin,heavy,").replace("barrel,5,0.45,2,0.3", "barrel,5,0.45,2,1.7").replace("bumper,", "Crate,");
    const before = await countRows(db, catalogues);
    const { status, body } = await upload(studio, form(bad, "crateslide.csv"));
    expect(status).toBe(422);
    const error = errorOf(body);
    expect(error.code).toBe("invalid_catalogue");
    expect(error.issues?.map((issue) => issue.field)).toEqual(["file.row 3.mass_kg", "file.row 4.restitution", "file.row 6.name"]);
    expect(error.issues?.[2].message).toBe('Row 6, name: duplicate name "Crate": row 2 already uses it (names are compared ignoring case)');
    expect(await countRows(db, catalogues)).toBe(before);
  });

  it("refuses a body over the limit with 413 naming it, and a non-multipart body with 415", async () => {
    const big = await upload(studio, form(new Uint8Array(300 * 1024).fill(0x61), "big.csv"));
    expect(big.status).toBe(413);
    expect(errorOf(big.body).message).toMatch(/262,144 bytes \(256 KiB\)/);
    const plain = await call(cataloguesRoute.POST, { method: "POST", path: base(studio), params: { studioId: studio.studioId }, body: { file: "x" }, cookie: studio.cookies.engineer });
    expect(plain.status).toBe(415);
  });

  it("stores valid uploads as versions of a name and gives the original bytes back with their hash", async () => {
    const bom = new Uint8Array([0xef, 0xbb, 0xbf, ...new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV)]);
    const first = await upload(studio, form(bom, "crateslide.csv", "Crateslide objects"));
    expect(first.status).toBe(201);
    const v1 = (first.body as { catalogue: { id: string; version: number; contentHash: string; notes: string[] } }).catalogue;
    expect(v1.version).toBe(1);
    expect(v1.contentHash).toBe(contentHash(bom));
    expect(v1.notes).toContain("The file starts with a UTF-8 byte-order mark; it was skipped.");
    const second = await upload(studio, form(CRATESLIDE_CATALOGUE_CSV.replace("crate,3,", "crate,3.5,"), "crateslide.csv", "Crateslide objects"));
    expect((second.body as { catalogue: { version: number } }).catalogue.version).toBe(2);

    const res = await fileRoute.GET(buildRequest({ path: `${base(studio)}/${v1.id}/file`, cookie: studio.cookies.finance }), { params: Promise.resolve({ studioId: studio.studioId, catalogueId: v1.id }) });
    expect(res.status).toBe(200);
    const bytes = new Uint8Array(await res.arrayBuffer());
    expect(bytes).toEqual(bom);
    expect(res.headers.get("x-content-sha256")).toBe(contentHash(bytes));

    const detail = await call(catalogueRoute.GET, { path: `${base(studio)}/${v1.id}`, params: { studioId: studio.studioId, catalogueId: v1.id }, cookie: studio.cookies.finance });
    expect((detail.body as { catalogue: { versions: { version: number }[] } }).catalogue.versions.map((v) => v.version)).toEqual([2, 1]);
    // Another studio sees nothing.
    const foreign = await call(catalogueRoute.GET, { path: `${base(rival)}/${v1.id}`, params: { studioId: rival.studioId, catalogueId: v1.id }, cookie: rival.cookies.owner });
    expect(foreign.status).toBe(404);
  });

  it("keeps the uploaded bytes of a table corrected before saving: the original file is what was uploaded, ?copy=saved the corrected table", async () => {
    // The upload page sends the corrected table as "file" and the file as chosen as "original".
    const uploaded = new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV.replace("coin,0.6,", "coin,heavy,"));
    const corrected = CRATESLIDE_CATALOGUE_CSV;
    const data = form(corrected, "crateslide-fixed.csv", "Crateslide corrected");
    data.set("original", new Blob([uploaded as BlobPart], { type: "text/csv" }), "crateslide.csv");
    const saved = await upload(studio, data);
    expect(saved.status).toBe(201);
    const catalogue = (saved.body as { catalogue: { id: string; contentHash: string; original: { fileName: string; fileBytes: number; contentHash: string } | null } }).catalogue;
    expect(catalogue.contentHash).toBe(contentHash(new TextEncoder().encode(corrected)));
    expect(catalogue.original).toEqual({ fileName: "crateslide.csv", fileBytes: uploaded.length, contentHash: contentHash(uploaded) });
    const params = { studioId: studio.studioId, catalogueId: catalogue.id };

    const original = await fileRoute.GET(buildRequest({ path: `${base(studio)}/${catalogue.id}/file`, cookie: studio.cookies.finance }), { params: Promise.resolve(params) });
    expect(new Uint8Array(await original.arrayBuffer())).toEqual(uploaded);
    expect(original.headers.get("x-content-sha256")).toBe(contentHash(uploaded));
    expect(original.headers.get("content-disposition")).toBe('attachment; filename="crateslide.csv"');

    const correctedRes = await fileRoute.GET(buildRequest({ path: `${base(studio)}/${catalogue.id}/file?copy=saved`, cookie: studio.cookies.finance }), { params: Promise.resolve(params) });
    expect(await correctedRes.text()).toBe(corrected);

    const wrong = await fileRoute.GET(buildRequest({ path: `${base(studio)}/${catalogue.id}/file?copy=fixed`, cookie: studio.cookies.finance }), { params: Promise.resolve(params) });
    expect(wrong.status).toBe(400);
    expect(errorOf(await wrong.json())).toMatchObject({ code: "validation_failed", field: "copy" });
  });
});

describe("the demo", () => {
  it("seeds Crateslide's catalogue once", async () => {
    const { studioId } = await seedDemo(db);
    await seedDemo(db);
    const seeded = await listCatalogues(db, studioId);
    expect(seeded.map((c) => [c.name, c.version, c.objectCount])).toEqual([["Crateslide objects", 1, 5]]);
    expect(seeded[0].contentHash).toBe(contentHash(new TextEncoder().encode(CRATESLIDE_CATALOGUE_CSV)));
  });
});

describe("a catalogue check", () => {
  it("is quoted as its sweep, runs through the queue and the ledger, and reads back as a pair matrix", async () => {
    const uploaded = await upload(studio, form(CRATESLIDE_CATALOGUE_CSV, "crateslide.csv", "Crateslide check"));
    const catalogueId = (uploaded.body as { catalogue: { id: string } }).catalogue.id;
    const params = { studioId: studio.studioId, catalogueId };

    const badSettings = await call(quoteRoute.POST, { method: "POST", path: `${base(studio)}/${catalogueId}/quote`, params, body: { settings: { ...SETTINGS, dtS: 0 } }, cookie: studio.cookies.engineer });
    expect(badSettings.status).toBe(400);
    expect(errorOf(badSettings.body).field).toBe("settings.dtS");

    const quoted = await call(quoteRoute.POST, { method: "POST", path: `${base(studio)}/${catalogueId}/quote`, params, body: { settings: SETTINGS }, cookie: studio.cookies.engineer });
    expect(quoted.status).toBe(200);
    const quote = (quoted.body as { quote: { cells: number; estimatedComputeMs: number; ceilingMs: number } }).quote;
    expect(quote.cells).toBe(15 * 3);

    const submitted = await call(checksRoute.POST, { method: "POST", path: `${base(studio)}/${catalogueId}/checks`, params, body: { settings: SETTINGS, acceptedQuoteMs: quote.ceilingMs }, cookie: studio.cookies.engineer });
    expect(submitted.status).toBe(201);
    const check = (submitted.body as { check: { id: string; sweep: { id: string; spec: unknown } } }).check;
    // The same spec quoted through the plain sweep quote gives the same quote: one path for both.
    const plainQuote = await call(quotesRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/quotes`, params: { studioId: studio.studioId }, body: { spec: check.sweep.spec }, cookie: studio.cookies.engineer });
    expect((plainQuote.body as { quote: { cells: number } }).quote.cells).toBe(quote.cells);

    const done = await waitForSweep(check.sweep.id, (sweep) => sweep.status === "done");
    expect((await usageEntries(done.id)).length).toBe(done.chunks);

    const viewed = await call(checkRoute.GET, { path: `${base(studio)}/${catalogueId}/checks/${check.id}`, params: { ...params, checkId: check.id }, cookie: studio.cookies.finance });
    const view = (viewed.body as { check: { matrix: { complete: boolean; pairs: unknown[]; atRisk: string[]; riskiest: string }; recommendation: { stiffness: number }; confirmation: { status: string } } }).check;
    expect(view.matrix.complete).toBe(true);
    expect(view.matrix.pairs).toHaveLength(15);
    expect(view.matrix.atRisk).toContain("coin × coin");
    expect(view.recommendation.stiffness).toBeCloseTo(0.3 * 384 ** 2, 6);
    expect(view.confirmation.status).toBe("not-run");

    // Confirming: a check at the recommended stiffness, through the same path.
    const confirmSettings = { ...SETTINGS, stiffness: view.recommendation.stiffness };
    const confirm = await call(checksRoute.POST, { method: "POST", path: `${base(studio)}/${catalogueId}/checks`, params, body: { settings: confirmSettings }, cookie: studio.cookies.engineer });
    await waitForSweep((confirm.body as { check: { sweep: { id: string } } }).check.sweep.id, (sweep) => sweep.status === "done");
    const again = await call(checkRoute.GET, { path: `${base(studio)}/${catalogueId}/checks/${check.id}`, params: { ...params, checkId: check.id }, cookie: studio.cookies.engineer });
    expect((again.body as { check: { confirmation: { status: string } } }).check.confirmation.status).toBe("confirmed");

    const csv = await exportRoute.GET(buildRequest({ path: `${base(studio)}/${catalogueId}/checks/${check.id}/export?format=csv`, cookie: studio.cookies.engineer }), { params: Promise.resolve({ ...params, checkId: check.id }) });
    const lines = (await csv.text()).split("\r\n");
    expect(lines[0]).toMatch(/^pair,object_a,object_b,closing_speed_m_per_s,stiffness,worst_verdict,highest_stable_speed_m_per_s,bound_margin,cells,/);
    expect(lines).toHaveLength(15 + 2);
    const json = await exportRoute.GET(buildRequest({ path: `${base(studio)}/${catalogueId}/checks/${check.id}/export?format=json`, cookie: studio.cookies.engineer }), { params: Promise.resolve({ ...params, checkId: check.id }) });
    expect((await json.json()).recommendation.stiffness).toBeCloseTo(0.3 * 384 ** 2, 6);
    expect(await countRows(db, catalogueChecks)).toBeGreaterThanOrEqual(2);
    expect(await countRows(db, sweeps)).toBeGreaterThanOrEqual(2);
  });
});

describe("a catalogue check with friction", () => {
  it("answers bad friction values 422 naming row and column, and stores nothing", async () => {
    const before = await countRows(db, catalogues);
    const bad = LANTERNFALL_FRICTION_CSV.replace("ice puck,0.5,0.1,4,0.5,,0.1,", "ice puck,0.5,0.1,4,0.5,,-0.1,").replace("loot chest,4,0.3,1,0.3,,0.6,0.02", "loot chest,4,0.3,1,0.3,,NaN,1.5").replace("lantern,1,0.2,2,0.4,,,", "lantern,1,0.2,2,0.4,,10.5,");
    const { status, body } = await upload(studio, form(bad, "lanternfall.csv"));
    expect(status).toBe(422);
    const error = errorOf(body);
    expect(error.code).toBe("invalid_catalogue");
    expect(error.field).toBe("file.row 2.friction");
    expect(error.issues?.map((issue) => issue.field)).toEqual(["file.row 2.friction", "file.row 3.friction", "file.row 3.rolling_resistance", "file.row 4.friction"]);
    expect(error.issues?.[3].message).toMatch(/^Row 4, friction: out of range: .*≤ 10/);
    expect(await countRows(db, catalogues)).toBe(before);
  });

  it("refuses a k_t/k of zero with 400 naming the field, and queues nothing", async () => {
    const uploaded = await upload(studio, form(LANTERNFALL_FRICTION_CSV, "lanternfall.csv", "Lanternfall zero ratio"));
    const catalogueId = (uploaded.body as { catalogue: { id: string } }).catalogue.id;
    const sweepsBefore = await countRows(db, sweeps);
    const res = await call(checksRoute.POST, { method: "POST", path: `${base(studio)}/${catalogueId}/checks`, params: { studioId: studio.studioId, catalogueId }, body: { settings: { ...SETTINGS, frictionStiffnessRatio: 0 } }, cookie: studio.cookies.engineer });
    expect(res.status).toBe(400);
    expect(errorOf(res.body).field).toBe("settings.frictionStiffnessRatio");
    expect(await countRows(db, sweeps)).toBe(sweepsBefore);
  });

  it("runs like any check and reads back with its friction rows, the largest k_t/k and the substeps, in the view and the exports", async () => {
    const uploaded = await upload(studio, form(LANTERNFALL_FRICTION_CSV, "lanternfall.csv", "Lanternfall"));
    expect(uploaded.status).toBe(201);
    const catalogue = (uploaded.body as { catalogue: { id: string; objects: { name: string; friction?: number; rollingResistance?: number }[] } }).catalogue;
    expect(catalogue.objects[1]).toMatchObject({ name: "loot chest", friction: 0.6, rollingResistance: 0.02 });
    expect(catalogue.objects[2]).not.toHaveProperty("friction");
    const params = { studioId: studio.studioId, catalogueId: catalogue.id };
    const settings = { dtS: 1 / 60, substeps: 8, integrator: "symplectic-euler", stiffness: 100_000, margin: 0.5, frictionStiffnessRatio: 1, slopeAngleDeg: 20, speedSteps: 2, offsets: [0] };
    const submitted = await call(checksRoute.POST, { method: "POST", path: `${base(studio)}/${catalogue.id}/checks`, params, body: { settings }, cookie: studio.cookies.engineer });
    expect(submitted.status).toBe(201);
    const check = (submitted.body as { check: { id: string; sweep: { id: string } } }).check;
    await waitForSweep(check.sweep.id, (sweep) => sweep.status === "done");
    const viewed = await call(checkRoute.GET, { path: `${base(studio)}/${catalogue.id}/checks/${check.id}`, params: { ...params, checkId: check.id }, cookie: studio.cookies.finance });
    expect(viewed.status).toBe(200);
    const friction = (viewed.body as { check: { recommendation: { friction: { largestStiffnessRatio: number; largestStiffnessRatioContact: string; substeps: number; contacts: { contact: string; holdsOnSlope: boolean | null }[] } } } }).check.recommendation.friction;
    // Two pucks decide: m_t = (0.5/3)/2 kg, r ≤ m_t·(2(1 − margin)·480)²/k = 0.192 (symplectic Euler bound ω·h < 2,
    // Hairer, Lubich & Wanner 2006, with the check's margin); at k_t/k = 1 they need ⌈√(1e5/m_t)/60⌉ = 19 substeps.
    expect(friction.largestStiffnessRatioContact).toBe("ice puck × ice puck");
    expect(friction.largestStiffnessRatio).toBeCloseTo(0.192, 12);
    expect(friction.substeps).toBe(19);
    // tan 20° = 0.364: the chest (μ 0.6) holds, the puck (μ 0.1) slides (Kleppner & Kolenkow 2014, ch. 2).
    expect(friction.contacts.find((row) => row.contact === "loot chest on the floor")?.holdsOnSlope).toBe(true);
    expect(friction.contacts.find((row) => row.contact === "ice puck on the floor")?.holdsOnSlope).toBe(false);

    const exportOf = (query: string) => exportRoute.GET(buildRequest({ path: `${base(studio)}/${catalogue.id}/checks/${check.id}/export?${query}`, cookie: studio.cookies.engineer }), { params: Promise.resolve({ ...params, checkId: check.id }) });
    const csv = await exportOf("format=csv&table=friction");
    expect(csv.status).toBe(200);
    const lines = (await csv.text()).trimEnd().split("\r\n");
    expect(lines[0]).toMatch(/^contact,kind,object_a,object_b,friction,rolling_resistance,stiffness,tangential_stiffness_n_per_m,tangential_mass_kg,tangential_omega_h,tangential_stable,largest_stiffness_ratio,/);
    expect(lines).toHaveLength(1 + friction.contacts.length);
    const recommendationCsv = await (await exportOf("format=csv&table=recommendation")).text();
    expect(recommendationCsv).toContain("\r\nfriction_largest_stiffness_ratio,0.192,k_t/k,");
    expect((await (await exportOf("format=json")).json()).recommendation.friction.substeps).toBe(19);

    // A catalogue without friction has no friction table: 422 naming table.
    const plainCsv = ["name,mass_kg,radius_m,top_speed_m_per_s,restitution,group", "crate,3,0.4,2.5,0.4,cargo", "coin,0.6,0.25,3,0.6,loot", ""].join("\r\n");
    const plain = await upload(studio, form(plainCsv, "c.csv", "Crateslide no friction"));
    const plainId = (plain.body as { catalogue: { id: string } }).catalogue.id;
    const plainCheck = await call(checksRoute.POST, { method: "POST", path: `${base(studio)}/${plainId}/checks`, params: { studioId: studio.studioId, catalogueId: plainId }, body: { settings: SETTINGS }, cookie: studio.cookies.engineer });
    const plainCheckId = (plainCheck.body as { check: { id: string } }).check.id;
    const noTable = await exportRoute.GET(buildRequest({ path: `${base(studio)}/${plainId}/checks/${plainCheckId}/export?format=csv&table=friction`, cookie: studio.cookies.engineer }), { params: Promise.resolve({ studioId: studio.studioId, catalogueId: plainId, checkId: plainCheckId }) });
    expect(noTable.status).toBe(422);
    expect(errorOf(await noTable.json()).field).toBe("table");
  });
});

describe("hostile uploads and settings", () => {
  it("answer 4xx naming the field, never a 500", async () => {
    const nulName = await upload(studio, form(CRATESLIDE_CATALOGUE_CSV, "c.csv", "crate\u0000s"));
    expect(nulName.status).toBe(400);
    expect(errorOf(nulName.body).field).toBe("name");
    const nulCell = await upload(studio, form(CRATESLIDE_CATALOGUE_CSV.replace("crate,", "cr\u0000ate,"), "c.csv"));
    expect(nulCell.status).toBe(422);
    expect(errorOf(nulCell.body).issues?.[0].message).toBe("the file holds NUL characters: it is not a text file");
    const noFile = new FormData();
    noFile.set("name", "nothing");
    expect((await upload(studio, noFile)).status).toBe(400);
    const uploaded = await upload(studio, form(CRATESLIDE_CATALOGUE_CSV, "c.csv", "Hostile settings"));
    const catalogueId = (uploaded.body as { catalogue: { id: string } }).catalogue.id;
    const res = await call(checksRoute.POST, {
      method: "POST",
      path: `${base(studio)}/${catalogueId}/checks`,
      params: { studioId: studio.studioId, catalogueId },
      body: { settings: { ...SETTINGS, groupStiffness: { "car\u0000go": 1000 } } },
      cookie: studio.cookies.engineer,
    });
    expect(res.status).toBe(400);
    expect(errorOf(res.body).field).toMatch(/^settings\.groupStiffness/);
    const empty = await call(checksRoute.POST, {
      method: "POST",
      path: `${base(studio)}/${catalogueId}/checks`,
      params: { studioId: studio.studioId, catalogueId },
      body: { settings: { ...SETTINGS, groupStiffness: { "": 1000 } } },
      cookie: studio.cookies.engineer,
    });
    expect(empty.status).toBe(400);
    expect(errorOf(empty.body).code).toBe("invalid_settings");
  });
});
