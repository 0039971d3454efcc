/**
 * Bad input never gives a 500 (fast-check): valid sweep specs, catalogue-check settings, catalogue
 * files and snapshot files, mutated (wrong types, NaN/Infinity written as strings, huge and negative
 * counts, deep nesting, unknown keys, `__proto__`), sent through the real route handlers. Every answer
 * is below 500; every 4xx names the field it refuses; a refused request changes no stored row.
 */
import fc from "fast-check";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import type { Db } from "@/db/client";
import * as schema from "@/db/schema";
import * as quotesRoute from "@/app/api/v1/studios/[studioId]/quotes/route";
import * as sweepsRoute from "@/app/api/v1/studios/[studioId]/sweeps/route";
import * as cataloguesRoute from "@/app/api/v1/studios/[studioId]/catalogues/route";
import * as catalogueQuoteRoute from "@/app/api/v1/studios/[studioId]/catalogues/[catalogueId]/quote/route";
import * as snapshotsRoute from "@/app/api/v1/studios/[studioId]/snapshots/route";
import { CRATESLIDE_CATALOGUE_CSV, CRATESLIDE_SETTINGS } from "@/lib/catalogues/demo";
import { CRATESLIDE_SNAPSHOT_JSON } from "@/lib/snapshots/demo";
import { closeTestDb, countRows, useFreshDb } from "../helpers/db";
import { call, errorOf } from "../helpers/http";
import { makeSweepStudio, puckSpec, type TestStudio } from "./sweeps/support";
import { ballPitBoxSpec, bumperWallSpec } from "../unit/sweeps/fixtures";

let db: Db;
let studio: TestStudio;
let catalogueId: string;

/** Hostile values a mutation puts in place of any value of a valid document. */
let deep: unknown = 1;
for (let i = 0; i < 400; i++) deep = { nested: [deep] };
const HOSTILE = fc.constantFrom<unknown>(
  "NaN",
  "Infinity",
  "-Infinity",
  "1e309",
  "-1",
  "",
  "\u0000",
  -1,
  0,
  -0,
  0.5,
  -1e308,
  1e308,
  2 ** 53,
  -(2 ** 31),
  2 ** 32,
  Number.MAX_SAFE_INTEGER,
  1e-320,
  true,
  null,
  [],
  {},
  [1e308, -1],
  "x".repeat(5_000),
  deep,
);
const KEY = fc.constantFrom("__proto__", "constructor", "prototype", "toString", "extra", "count", "values", "hasOwnProperty");

/** Every path (list of keys) inside a JSON value, the root included. */
function paths(value: unknown, at: (string | number)[] = []): (string | number)[][] {
  const out: (string | number)[][] = [at];
  if (Array.isArray(value)) value.forEach((v, i) => out.push(...paths(v, [...at, i])));
  else if (value && typeof value === "object") for (const [k, v] of Object.entries(value)) out.push(...paths(v, [...at, k]));
  return out;
}

type Mutation = { kind: "replace"; pick: number; value: unknown } | { kind: "add"; pick: number; key: string; value: unknown } | { kind: "remove"; pick: number };
const MUTATION: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant("replace" as const), pick: fc.nat(), value: HOSTILE }),
  fc.record({ kind: fc.constant("add" as const), pick: fc.nat(), key: KEY, value: HOSTILE }),
  fc.record({ kind: fc.constant("remove" as const), pick: fc.nat() }),
);

/** Applies mutations to a deep copy; `__proto__` becomes an own key, as JSON.parse makes it on the server. */
function mutate(valid: unknown, mutations: Mutation[]): unknown {
  let doc: unknown = JSON.parse(JSON.stringify(valid));
  for (const m of mutations) {
    // A fresh copy per mutation: fast-check may hand the same value object to two mutations, and
    // adding it inside itself would make the document cyclic (not something JSON can carry).
    const value = m.kind === "remove" ? undefined : structuredClone(m.value);
    const all = paths(doc);
    const target = all[m.pick % all.length];
    if (m.kind === "replace") {
      if (target.length === 0) doc = value;
      else setAt(doc, target, value);
    } else if (m.kind === "remove") {
      if (target.length > 0) removeAt(doc, target);
    } else {
      const container = getAt(doc, target);
      if (container && typeof container === "object" && !Array.isArray(container)) Object.defineProperty(container, m.key, { value, enumerable: true, configurable: true, writable: true });
      else if (Array.isArray(container)) container.push(value);
    }
  }
  return doc;
}
function getAt(doc: unknown, path: (string | number)[]): unknown {
  return path.reduce<unknown>((v, k) => (v as Record<string | number, unknown>)[k], doc);
}
function setAt(doc: unknown, path: (string | number)[], value: unknown): void {
  const parent = getAt(doc, path.slice(0, -1)) as Record<string | number, unknown>;
  Object.defineProperty(parent, path[path.length - 1], { value, enumerable: true, configurable: true, writable: true });
}
function removeAt(doc: unknown, path: (string | number)[]): void {
  const parent = getAt(doc, path.slice(0, -1));
  const key = path[path.length - 1];
  if (Array.isArray(parent)) parent.splice(Number(key), 1);
  else delete (parent as Record<string, unknown>)[key as string];
}

async function storedRows(): Promise<Record<string, number>> {
  return {
    sweeps: await countRows(db, schema.sweeps),
    chunks: await countRows(db, schema.sweepChunks),
    checks: await countRows(db, schema.catalogueChecks),
    outbox: await countRows(db, schema.outbox),
    ledger: await countRows(db, schema.ledgerEntries),
    catalogues: await countRows(db, schema.catalogues),
    snapshots: await countRows(db, schema.snapshots),
  };
}

interface Target {
  name: string;
  valid: unknown;
  send: (doc: unknown) => Promise<{ status: number; body: unknown }>;
}

const CATALOGUE_OBJECTS = CRATESLIDE_CATALOGUE_CSV.trim()
  .split("\r\n")
  .slice(1)
  .map((line) => {
    const [name, massKg, radiusM, topSpeedMPerS, restitution, group, friction, rollingResistance] = line.split(",");
    return {
      name,
      mass_kg: Number(massKg),
      radius_m: Number(radiusM),
      top_speed_m_per_s: Number(topSpeedMPerS),
      restitution: Number(restitution),
      group,
      ...(friction ? { friction: Number(friction) } : {}),
      ...(rollingResistance ? { rolling_resistance: Number(rollingResistance) } : {}),
    };
  });

function fileForm(doc: unknown, fileName: string, name: string): FormData {
  const form = new FormData();
  form.set("file", new Blob([JSON.stringify(doc)], { type: "application/json" }), fileName);
  form.set("name", name);
  return form;
}

function targets(): Target[] {
  const params = { studioId: studio.studioId };
  const base = `/api/v1/studios/${studio.studioId}`;
  const cookie = studio.cookies.engineer;
  const post = (handler: unknown, path: string, body: unknown, extra: Record<string, string> = {}) =>
    call(handler, { method: "POST", path, params: { ...params, ...extra }, body: body instanceof FormData ? body : JSON.stringify(body), cookie });
  return [
    ...[puckSpec(), bumperWallSpec(), ballPitBoxSpec()].map((spec, i) => ({
      name: `quote of spec ${i}`,
      valid: { spec },
      send: (doc: unknown) => post(quotesRoute.POST, `${base}/quotes`, doc),
    })),
    {
      name: "sweep submission",
      valid: { spec: puckSpec(), name: "Puckyard mutation" },
      send: (doc: unknown) => post(sweepsRoute.POST, `${base}/sweeps`, doc),
    },
    {
      name: "catalogue-check quote",
      valid: { settings: CRATESLIDE_SETTINGS },
      send: (doc: unknown) => post(catalogueQuoteRoute.POST, `${base}/catalogues/${catalogueId}/quote`, doc, { catalogueId }),
    },
    {
      name: "catalogue file",
      valid: { objects: CATALOGUE_OBJECTS },
      send: (doc: unknown) => post(cataloguesRoute.POST, `${base}/catalogues`, fileForm(doc, "objects.json", "Mutated objects")),
    },
    {
      name: "snapshot file",
      valid: JSON.parse(CRATESLIDE_SNAPSHOT_JSON) as unknown,
      send: (doc: unknown) => post(snapshotsRoute.POST, `${base}/snapshots`, fileForm(doc, "bay.json", "Mutated bay")),
    },
  ];
}

beforeAll(async () => {
  db = await useFreshDb();
  studio = await makeSweepStudio("Mutation Wharf Games");
  const saved = await call(cataloguesRoute.POST, {
    method: "POST",
    path: `/api/v1/studios/${studio.studioId}/catalogues`,
    params: { studioId: studio.studioId },
    body: fileForm({ objects: CATALOGUE_OBJECTS }, "objects.json", "Crateslide objects"),
    cookie: studio.cookies.engineer,
  });
  expect(saved.status).toBe(201);
  catalogueId = (saved.body as { catalogue: { id: string } }).catalogue.id;
});
afterAll(closeTestDb);

describe("mutated documents through the real routes", () => {
  it("the unmutated documents are accepted (so the mutations start from valid input)", async () => {
    for (const target of targets()) {
      const res = await target.send(target.valid);
      expect(res.status, `${target.name}: ${JSON.stringify(res.body).slice(0, 300)}`).toBeLessThan(300);
    }
  });

  it("an axis count that is negative, huge, fractional or not a number is a 422 naming the axis count (was a 500: new Array(-1))", async () => {
    const quote = targets()[0];
    for (const count of [-1, -1e308, 0, 2.5, 1e9, 1e308, "NaN", "Infinity", null]) {
      const spec = puckSpec() as { axes: { count?: unknown }[] };
      spec.axes[0].count = count;
      const res = await quote.send({ spec });
      expect(res.status, `count ${String(count)}: ${JSON.stringify(res.body)}`).toBe(422);
      expect(errorOf(res.body).field, `count ${String(count)}`).toBe("spec.axes.0.count");
    }
  });

  for (const index of [0, 1, 2, 3, 4, 5, 6]) {
    it(`target ${index}: no 5xx, every 4xx names a field, a refused request stores nothing`, async () => {
      const target = targets()[index];
      const errors = vi.spyOn(console, "error").mockImplementation(() => undefined);
      const seen = { sent: 0, refused: 0, accepted: 0 };
      try {
        await fc.assert(
          fc.asyncProperty(fc.array(MUTATION, { minLength: 1, maxLength: 3 }), async (mutations) => {
            const doc = mutate(target.valid, mutations);
            const before = await storedRows();
            const res = await target.send(doc);
            seen.sent += 1;
            const label = `${target.name} ${JSON.stringify(mutations).slice(0, 300)} → ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`;
            expect(res.status, label).toBeLessThan(500);
            if (res.status >= 400) {
              seen.refused += 1;
              expect(errorOf(res.body).field, label).toMatch(/\S/);
              expect(await storedRows(), label).toEqual(before);
            } else seen.accepted += 1;
          }),
          { numRuns: 150 },
        );
        expect(errors.mock.calls.filter((c) => String(c[0]).includes("unexpected error"))).toEqual([]);
      } finally {
        errors.mockRestore();
        console.log(`[mutated-input] ${target.name}: ${seen.sent} sent, ${seen.refused} refused with a field, ${seen.accepted} accepted, 0 answers of 5xx`);
      }
    });
  }
});
