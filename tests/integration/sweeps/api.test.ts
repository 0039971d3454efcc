/**
 * The sweep API through its route handlers: validation answers naming fields and limits with
 * nothing queued, studio isolation, the read routes (cells JSON/CSV, drill-down, envelope) and
 * rerun, with a real runner finishing the sweeps.
 */
import { envelopeDocumentSchema } from "@/lib/sweeps/envelope";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { ledgerEntries, sweepChunks, sweepResults, sweeps } from "@/db/schema";
import { SPEC_LIMITS } from "@/lib/sweeps/parameters";
import { createStudio } from "@/lib/studios/studios";
import { WELCOME_GRANT_MS } from "@/lib/ledger/ledger";
import { balanceMs } from "@/lib/quotas/standing";
import * as quotesRoute from "@/app/api/v1/studios/[studioId]/quotes/route";
import * as sweepsRoute from "@/app/api/v1/studios/[studioId]/sweeps/route";
import * as sweepRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/route";
import * as cancelRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cancel/route";
import * as cellsRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/route";
import * as cellRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/[index]/route";
import * as rerunRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/[index]/rerun/route";
import * as rerunQuoteRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/cells/[index]/rerun/quote/route";
import * as envelopeRoute from "@/app/api/v1/studios/[studioId]/sweeps/[sweepId]/envelope/route";
import { countRows } from "../../helpers/db";
import { makeToken, makeUser } from "../../helpers/factories";
import { call, errorOf } from "../../helpers/http";
import { makeSweepStudio, puckSpec, startSweepRunner, stopSweepRunner, waitForSweep, type TestStudio } from "./support";

let db: Db;
let studio: TestStudio;
let rival: TestStudio;

beforeAll(async () => ({ db, studios: [studio, rival] } = await startSweepRunner("Gullwing Pinball Co", "Marram Dune Games")));
afterAll(stopSweepRunner);

const base = (s: TestStudio) => `/api/v1/studios/${s.studioId}`;

async function submit(s: TestStudio, spec: unknown, cookie = s.cookies.engineer) {
  return call(sweepsRoute.POST, { method: "POST", path: `${base(s)}/sweeps`, params: { studioId: s.studioId }, body: { spec }, cookie });
}

async function rowCounts() {
  return Promise.all([sweeps, sweepChunks, sweepResults, ledgerEntries].map((t) => countRows(db, t)));
}

type Spec = { scenario: Record<string, unknown>; axes: Record<string, unknown>[] };

describe("bad input: 422 naming the spec path, nothing queued", () => {
  const cases: { what: string; mutate: (spec: Spec) => void; field: string; mentions?: RegExp }[] = [
    { what: "negative mass", mutate: (s) => ((s.scenario.scene as Record<string, unknown>).massAKg = -1), field: "spec.scenario.scene.massAKg" },
    { what: "axis count zero", mutate: (s) => (s.axes[0].count = 0), field: "spec.axes.0.count" },
    { what: "unknown axis parameter", mutate: (s) => (s.axes[1].parameter = "scene.wobble"), field: "spec.axes.1.parameter" },
    { what: "unknown field", mutate: (s) => (s.scenario.colour = "teal"), field: "spec.scenario.colour" },
    { what: "timestep a string", mutate: (s) => (s.scenario.dtS = "fast"), field: "spec.scenario.dtS" },
    {
      what: "too many cells",
      mutate: (s) => {
        s.axes[0].count = 1000;
        s.axes[1].count = 1000;
      },
      field: "spec.axes",
      mentions: new RegExp(`1,000,000 cells.*${SPEC_LIMITS.maxCellsPerSweep.toLocaleString("en-US")}`),
    },

    // Friction (issue #15): limits from lib/sweeps/parameters.ts.
    { what: "negative friction coefficient", mutate: (s) => ((s.scenario.contact as Record<string, unknown>).friction = { coefficient: -0.1 }), field: "spec.scenario.contact.friction.coefficient", mentions: /≥ 0/ },
    { what: "friction coefficient over the limit", mutate: (s) => ((s.scenario.contact as Record<string, unknown>).friction = { coefficient: 11 }), field: "spec.scenario.contact.friction.coefficient", mentions: /10/ },
    { what: "friction coefficient not a number", mutate: (s) => ((s.scenario.contact as Record<string, unknown>).friction = { coefficient: "NaN" }), field: "spec.scenario.contact.friction.coefficient" },
    { what: "tangential stiffness ratio zero", mutate: (s) => ((s.scenario.contact as Record<string, unknown>).friction = { coefficient: 0.5, stiffnessRatio: 0 }), field: "spec.scenario.contact.friction.stiffnessRatio", mentions: /> 0/ },
    {
      what: "a pair's own friction coefficient negative (scene.pair axis)",
      mutate: (s) => {
        (s as { axes: unknown[] }).axes = [
          { parameter: "scene.pair", values: ["puck × striker"], pairs: [{ name: "puck × striker", massAKg: 0.17, radiusAM: 0.04, speedAMPerS: 6, massBKg: 0.4, radiusBM: 0.05, speedBMPerS: 0, friction: -0.1 }] },
        ];
      },
      field: "spec.axes.0.pairs.0.friction",
      mentions: /≥ 0/,
    },
    {
      what: "a stack over the body limit",
      mutate: (s) => {
        s.scenario.scene = { kind: "stack", count: 1001, massKg: 0.05, radiusM: 0.015, gravityMPerS2: 9.81 };
        s.axes = [{ parameter: "contact.stiffness", spacing: "log", from: 1e4, to: 1e6, count: 3 }];
      },
      field: "spec.scenario.scene.count",
      mentions: /1,?000/,
    },
  ];
  it.each(cases)("$what → $field", async ({ mutate, field, mentions }) => {
    const spec = JSON.parse(JSON.stringify(puckSpec())) as Spec;
    mutate(spec);
    const before = await rowCounts();
    for (const route of [quotesRoute.POST, sweepsRoute.POST]) {
      const path = route === quotesRoute.POST ? `${base(studio)}/quotes` : `${base(studio)}/sweeps`;
      const { status, body } = await call(route, { method: "POST", path, params: { studioId: studio.studioId }, body: { spec }, cookie: studio.cookies.engineer });
      expect(status, JSON.stringify(body)).toBe(422);
      const error = errorOf(body);
      expect(error.code).toBe("invalid_spec");
      expect(error.field).toBe(field);
      expect(error.issues?.some((issue) => issue.field === field)).toBe(true);
      if (mentions) expect(error.message).toMatch(mentions);
    }
    expect(await rowCounts()).toEqual(before);
  });

  it("a missing spec is 422 on the field spec; a sweep over the balance is 402 naming balance and estimate; nothing queued", async () => {
    const before = await rowCounts();
    const missing = await call(sweepsRoute.POST, { method: "POST", path: `${base(studio)}/sweeps`, params: { studioId: studio.studioId }, body: {}, cookie: studio.cookies.engineer });
    expect(missing.status).toBe(422);
    expect(errorOf(missing.body).field).toBe("spec");
    const broke = await makeSweepStudio("Shingle Street Studio", 0);
    const poor = await submit(broke, puckSpec());
    expect(poor.status).toBe(402);
    expect(errorOf(poor.body).code).toBe("insufficient_minutes");
    expect(errorOf(poor.body).message).toMatch(/quote ceiling is \d+ ms.*balance is 0 ms/);
    expect(await rowCounts()).toEqual(before);
  });

  it("finance may read but not submit (403)", async () => {
    const { status, body } = await submit(studio, puckSpec(), studio.cookies.finance);
    expect(status).toBe(403);
    expect(errorOf(body).code).toBe("forbidden");
  });
});

describe("a sweep through the API", { timeout: 120_000 }, () => {
  let sweepId: string;
  beforeAll(async () => {
    const quote = await call(quotesRoute.POST, { method: "POST", path: `${base(studio)}/quotes`, params: { studioId: studio.studioId }, body: { spec: puckSpec() }, cookie: studio.cookies.engineer });
    expect(quote.status).toBe(200);
    const q = (quote.body as { quote: { cells: number; cellsToRun: number; balanceMs: number; balanceAfterMs: number; estimatedComputeMs: number } }).quote;
    expect(q.cells).toBe(15);
    expect(q.balanceAfterMs).toBe(q.balanceMs - q.estimatedComputeMs);
    const submitted = await submit(studio, puckSpec());
    expect(submitted.status).toBe(201);
    sweepId = (submitted.body as { sweep: { id: string } }).sweep.id;
    await waitForSweep(sweepId, (s) => s.status === "done");
  });

  it("lists it, shows it with counts and axes, and serves its cells as JSON and CSV", async () => {
    const params = { studioId: studio.studioId, sweepId };
    const list = await call(sweepsRoute.GET, { path: `${base(studio)}/sweeps?status=done`, params: { studioId: studio.studioId }, cookie: studio.cookies.finance });
    expect(list.status).toBe(200);
    expect((list.body as { sweeps: { id: string }[]; total: number }).sweeps.map((s) => s.id)).toContain(sweepId);
    const badStatus = await call(sweepsRoute.GET, { path: `${base(studio)}/sweeps?status=sleeping`, params: { studioId: studio.studioId }, cookie: studio.cookies.finance });
    expect(badStatus.status).toBe(400);
    expect(errorOf(badStatus.body).field).toBe("status");

    const shown = await call(sweepRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}`, params, cookie: studio.cookies.finance });
    const sweep = (shown.body as { sweep: { status: string; cells: number; cellsDone: number; verdictCounts: Record<string, number>; axes: { path: string; values: number[] }[] } }).sweep;
    expect(sweep.status).toBe("done");
    expect(sweep.cellsDone).toBe(15);
    expect(Object.values(sweep.verdictCounts).reduce((a, b) => a + b, 0)).toBe(15);
    expect(sweep.axes.map((a) => a.path)).toEqual(["contact.stiffness", "dtS"]);

    const token = await makeToken(studio.studioId, ["read"]);
    const cells = await call(cellsRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/cells`, params, bearer: token.secret });
    const list15 = (cells.body as { cells: { index: number; axisValues: number[]; verdict: string }[] }).cells;
    expect(list15.map((c) => c.index)).toEqual([...Array(15).keys()]);
    expect(list15[4].axisValues).toEqual([sweep.axes[0].values[1], sweep.axes[1].values[1]]); // row-major: index 4 = (1, 1) on a 5 × 3 grid
    const csv = await call(cellsRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/cells?format=csv`, params, bearer: token.secret });
    expect(csv.res.headers.get("content-type")).toMatch(/^text\/csv/);
    expect(csv.res.headers.get("content-disposition")).toMatch(/^attachment/);
    const lines = (csv.body as string).split("\r\n");
    expect(lines[0].startsWith("index,contact.stiffness,dtS,verdict,reason,")).toBe(true);
    expect(lines.length).toBe(17); // header, 15 rows, and the empty string after the last CRLF
  });

  it("drills into a cell with its scenario and a recomputed series, and 404s cells outside the grid", async () => {
    const params = { studioId: studio.studioId, sweepId, index: "7" };
    const { status, body } = await call(cellRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/cells/7`, params, cookie: studio.cookies.owner });
    expect(status).toBe(200);
    const { cell, series } = body as { cell: { index: number; verdict: string; scenario: { dtS: number } }; series: { tS: number[] } };
    expect(cell.index).toBe(7);
    expect(typeof cell.verdict).toBe("string");
    expect(series.tS.length).toBeGreaterThan(1);
    expect(series.tS.length).toBeLessThanOrEqual(2000);
    for (const index of ["15", "-1", "1.5", "seven"]) {
      const outside = await call(cellRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/cells/${index}`, params: { ...params, index }, cookie: studio.cookies.owner });
      expect(outside.status, index).toBe(404);
    }
  });

  it("reruns a cell at a quarter of its timestep as a new one-cell sweep", async () => {
    const params = { studioId: studio.studioId, sweepId, index: "2" };
    const original = await call(cellRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/cells/2`, params, cookie: studio.cookies.owner });
    const dt = (original.body as { cell: { scenario: { dtS: number; seed: number } } }).cell.scenario;
    const { status, body } = await call(rerunRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cells/2/rerun`, params, cookie: studio.cookies.engineer });
    expect(status, JSON.stringify(body)).toBe(201);
    const rerun = (body as { sweep: { id: string; cells: number; spec: { scenario: { dtS: number } } } }).sweep;
    expect(rerun.cells).toBe(1);
    expect(rerun.spec.scenario.dtS).toBe(dt.dtS * 0.25);
    await waitForSweep(rerun.id, (s) => s.status === "done");
    const rerunCell = await call(cellRoute.GET, { path: `${base(studio)}/sweeps/${rerun.id}/cells/0`, params: { studioId: studio.studioId, sweepId: rerun.id, index: "0" }, cookie: studio.cookies.owner });
    expect((rerunCell.body as { cell: { scenario: { seed: number } } }).cell.scenario.seed).toBe(dt.seed);
    const bad = await call(rerunRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cells/2/rerun`, params, body: { dtFactor: 2 }, cookie: studio.cookies.engineer });
    expect(bad.status).toBe(400);
    expect(errorOf(bad.body).field).toBe("dtFactor");
  });

  it("quotes a re-run before it starts, refuses a re-run whose ceiling outgrew the accepted quote, and links the re-run to its parent cell", async () => {
    const params = { studioId: studio.studioId, sweepId, index: "3" };
    const before = await rowCounts();
    const quoted = await call(rerunQuoteRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cells/3/rerun/quote`, params, body: { dtFactor: 0.5 }, cookie: studio.cookies.engineer });
    expect(quoted.status, JSON.stringify(quoted.body)).toBe(200);
    const quote = (quoted.body as { quote: { cells: number; ceilingMs: number } }).quote;
    expect(quote.cells).toBe(1);
    expect(quote.ceilingMs).toBeGreaterThan(0);
    // A quote starts nothing.
    expect(await rowCounts()).toEqual(before);
    const tooLow = await call(rerunRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cells/3/rerun`, params, body: { dtFactor: 0.5, acceptedQuoteMs: quote.ceilingMs - 1 }, cookie: studio.cookies.engineer });
    expect(tooLow.status).toBe(409);
    expect(errorOf(tooLow.body).field).toBe("acceptedQuoteMs");
    expect(await rowCounts()).toEqual(before);
    const { status, body } = await call(rerunRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cells/3/rerun`, params, body: { dtFactor: 0.5, acceptedQuoteMs: quote.ceilingMs }, cookie: studio.cookies.engineer });
    expect(status, JSON.stringify(body)).toBe(201);
    const rerun = (body as { sweep: { id: string; ceilingMs: number; rerunOf: { sweepId: string; cellIndex: number } | null } }).sweep;
    expect(rerun.ceilingMs).toBe(quote.ceilingMs);
    expect(rerun.rerunOf).toEqual({ sweepId, cellIndex: 3 });
    const badQuote = await call(rerunQuoteRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cells/3/rerun/quote`, params, body: { dtFactor: 0 }, cookie: studio.cookies.engineer });
    expect(badQuote.status).toBe(400);
    expect(errorOf(badQuote.body).field).toBe("dtFactor");
  });

  it("searches the list by name (wildcards taken literally) and filters it by creator and status", async () => {
    const named = async (name: string, cookie: string) => {
      const spec = puckSpec() as Spec & { name?: string };
      const { status, body } = await call(sweepsRoute.POST, { method: "POST", path: `${base(studio)}/sweeps`, params: { studioId: studio.studioId }, body: { spec, name }, cookie });
      expect(status, JSON.stringify(body)).toBe(201);
      return (body as { sweep: { id: string } }).sweep.id;
    };
    const ownerSweep = await named("Tidewater flippers 100% bounce", studio.cookies.owner);
    const engineerSweep = await named("Tidewater flippers_low", studio.cookies.engineer);
    const list = async (query: string) => {
      const { status, body } = await call(sweepsRoute.GET, { path: `${base(studio)}/sweeps?${query}`, params: { studioId: studio.studioId }, cookie: studio.cookies.finance });
      expect(status, JSON.stringify(body)).toBe(200);
      return body as { sweeps: { id: string; createdBy: { id: string; name: string } | null }[]; total: number; creators: { id: string; name: string }[] };
    };
    expect((await list("q=tidewater")).sweeps.map((s) => s.id).sort()).toEqual([ownerSweep, engineerSweep].sort());
    // "%" and "_" match themselves, not any text.
    expect((await list("q=100%25")).sweeps.map((s) => s.id)).toEqual([ownerSweep]);
    expect((await list("q=flippers_")).sweeps.map((s) => s.id)).toEqual([engineerSweep]);
    const all = await list("q=tidewater");
    const ownerId = all.sweeps.find((s) => s.id === ownerSweep)!.createdBy!.id;
    expect(all.creators.map((c) => c.id)).toContain(ownerId);
    expect((await list(`q=tidewater&createdBy=${encodeURIComponent(ownerId)}`)).sweeps.map((s) => s.id)).toEqual([ownerSweep]);
    expect((await list(`q=tidewater&createdBy=${encodeURIComponent(ownerId)}&status=failed`)).total).toBe(0);
    const tooLong = await call(sweepsRoute.GET, { path: `${base(studio)}/sweeps?q=${"x".repeat(121)}`, params: { studioId: studio.studioId }, cookie: studio.cookies.finance });
    expect(tooLong.status).toBe(400);
    expect(errorOf(tooLong.body).field).toBe("q");
  });

  it("answers the envelope as JSON and CSV, and names a bad parameter", async () => {
    const params = { studioId: studio.studioId, sweepId };
    const { status, body } = await call(envelopeRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/envelope?x=0&y=1&margin=0&bound=max`, params, cookie: studio.cookies.finance });
    expect(status, JSON.stringify(body)).toBe(200);
    const envelope = (body as { envelope: { xPath: string; yPath: string; rows: unknown[] } }).envelope;
    expect(envelope.xPath).toBe("contact.stiffness");
    expect(envelope.rows.length).toBe(5);
    const csv = await call(envelopeRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/envelope?x=0&y=1&format=csv`, params, cookie: studio.cookies.finance });
    const lines = (csv.body as string).split("\r\n");
    expect(lines[0]).toBe('# format: "kickdrift-envelope"');
    expect(lines.some((line) => /^contact\.stiffness \[N\/m[^\]]*\],dtS safe \[s\],dtS max limit \[s\],status$/.test(line))).toBe(true);
    // The export states the sweep and the verdict rules, and validates against its published schema.
    const document = (body as { document: unknown }).document;
    expect(envelopeDocumentSchema.safeParse(document).success).toBe(true);
    expect((document as { sweep: { id: string } }).sweep.id).toBe(sweepId);
    const bad = await call(envelopeRoute.GET, { path: `${base(studio)}/sweeps/${sweepId}/envelope?x=0&y=1&margin=0.95`, params, cookie: studio.cookies.finance });
    expect(bad.status).toBe(422);
    expect(errorOf(bad.body).field).toBe("margin");
  });

  it("another studio sees 404 for the sweep, its cells, a cell, the CSV export and the envelope", async () => {
    const params = { studioId: rival.studioId, sweepId, index: "0" };
    const rivalBase = base(rival);
    const token = await makeToken(rival.studioId, ["read", "write"]);
    for (const auth of [{ cookie: rival.cookies.owner }, { bearer: token.secret }]) {
      const answers = [
        await call(sweepRoute.GET, { path: `${rivalBase}/sweeps/${sweepId}`, params, ...auth }),
        await call(cellsRoute.GET, { path: `${rivalBase}/sweeps/${sweepId}/cells`, params, ...auth }),
        await call(cellsRoute.GET, { path: `${rivalBase}/sweeps/${sweepId}/cells?format=csv`, params, ...auth }),
        await call(cellRoute.GET, { path: `${rivalBase}/sweeps/${sweepId}/cells/0`, params, ...auth }),
        await call(envelopeRoute.GET, { path: `${rivalBase}/sweeps/${sweepId}/envelope?x=0&y=1`, params, ...auth }),
        await call(cancelRoute.POST, { method: "POST", path: `${rivalBase}/sweeps/${sweepId}/cancel`, params, ...auth }),
        await call(rerunRoute.POST, { method: "POST", path: `${rivalBase}/sweeps/${sweepId}/cells/0/rerun`, params, ...auth }),
      ];
      for (const answer of answers) {
        expect(answer.status).toBe(404);
        expect(errorOf(answer.body).code).toBe("not_found");
      }
    }
    // The sweep's own studio, through the rival's URL, is no way in either.
    const own = await call(sweepRoute.GET, { path: `${base(rival)}/sweeps/${sweepId}`, params: { studioId: rival.studioId, sweepId }, cookie: studio.cookies.owner });
    expect(own.status).toBe(404);
  });

  it("cancelling a finished sweep is 409 naming its state", async () => {
    const params = { studioId: studio.studioId, sweepId };
    const late = await call(cancelRoute.POST, { method: "POST", path: `${base(studio)}/sweeps/${sweepId}/cancel`, params, cookie: studio.cookies.engineer });
    expect(late.status).toBe(409);
    expect(errorOf(late.body).code).toBe("invalid_state");
  });
});

describe("grants", () => {
  it("a new studio starts with the 30-minute welcome grant, once", async () => {
    const founder = await makeUser({ name: "founder" });
    const created = await createStudio(founder.id, { name: "Periwinkle Pocket Games" });
    expect(await balanceMs(db, created.id)).toBe(WELCOME_GRANT_MS);
    expect(WELCOME_GRANT_MS).toBe(30 * 60_000);
  });
});
