/**
 * Signed webhooks with a local receiver: the signature verifies with an independent Standard
 * Webhooks library (the npm package standardwebhooks); a replayed delivery is recognised by its
 * event id; a receiver that is down for a minute gets the event exactly once when it is back;
 * the delivery log and "send again" through the API. (That a hanging receiver does not delay chunk
 * recording is measured by tests/bench/webhook-isolation.ts, not asserted here.)
 */
import { createServer, type IncomingMessage, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { Webhook } from "standardwebhooks";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { OutboxDispatcher } from "@/lib/outbox/outbox";
import { submitSweep } from "@/lib/queue/submit";
import { verifyWebhook, WebhookVerificationError } from "@/lib/webhooks/signature";
import { deliverWebhook, endpointUrlProblem, scanWebhookEvents, webhookEventId, WEBHOOK_KIND } from "@/lib/webhooks/webhooks";
import * as endpointsRoute from "@/app/api/v1/studios/[studioId]/webhooks/route";
import * as deliveriesRoute from "@/app/api/v1/studios/[studioId]/webhooks/[endpointId]/deliveries/route";
import * as resendRoute from "@/app/api/v1/studios/[studioId]/webhooks/[endpointId]/deliveries/[eventId]/resend/route";
import { call, errorOf } from "../../helpers/http";
import { puckSpec, startSweepRunner, stopSweepRunner, waitForSweep, type TestStudio } from "../sweeps/support";

interface Received {
  id: string;
  timestamp: string;
  signature: string;
  body: string;
  /** What the receiver made of it, following the recipe in docs/api.md. */
  verdict: "accepted" | "replay" | "bad-signature";
}

/** A receiver as docs/api.md describes one: verify the signature, then drop an event id it has seen. */
class Receiver {
  server: Server | null = null;
  port = 0;
  received: Received[] = [];
  private seen = new Set<string>();
  status = 200;
  constructor(private readonly secret: () => string) {}

  async start(port = 0): Promise<void> {
    this.server = createServer((req: IncomingMessage, res) => {
      const chunks: Buffer[] = [];
      req.on("data", (chunk: Buffer) => chunks.push(chunk));
      req.on("end", () => {
        const body = Buffer.concat(chunks).toString("utf8");
        const headers = { id: String(req.headers["webhook-id"]), timestamp: String(req.headers["webhook-timestamp"]), signature: String(req.headers["webhook-signature"]) };
        let verdict: Received["verdict"] = "accepted";
        try {
          // The independent reference: the Standard Webhooks library verifies signature and timestamp.
          new Webhook(this.secret()).verify(body, { "webhook-id": headers.id, "webhook-timestamp": headers.timestamp, "webhook-signature": headers.signature });
          if (this.seen.has(headers.id)) verdict = "replay";
          this.seen.add(headers.id);
        } catch {
          verdict = "bad-signature";
        }
        this.received.push({ ...headers, body, verdict });
        res.writeHead(verdict === "bad-signature" ? 400 : this.status).end();
      });
    });
    await new Promise<void>((resolve) => this.server!.listen(port, "127.0.0.1", resolve));
    this.port = (this.server.address() as AddressInfo).port;
  }

  async stop(): Promise<void> {
    await new Promise<void>((resolve) => {
      this.server?.close(() => resolve());
      this.server?.closeAllConnections();
    });
    this.server = null;
  }
}

let db: Db;
let studio: TestStudio;
let secret = "";
let endpointId = "";
const receiver = new Receiver(() => secret);
/** The dispatcher's clock: real time plus an offset the tests move to make retries due. */
let offsetMs = 0;
const clock = () => new Date(Date.now() + offsetMs);
let dispatcher: OutboxDispatcher;

beforeAll(async () => {
  ({ db, studios: [studio] } = await startSweepRunner("Gannet Test Yard"));
  await receiver.start();
  dispatcher = new OutboxDispatcher({ db, handlers: { [WEBHOOK_KIND]: (row) => deliverWebhook(db, row) }, now: clock });
}, 180_000); // a fresh database, a worker thread and (for the client) its bundle: slow on a loaded machine
afterAll(async () => {
  await receiver.stop();
  await stopSweepRunner();
});

const params = () => ({ studioId: studio.studioId, endpointId });

async function deliveries() {
  const { status, body } = await call(deliveriesRoute.GET, { path: `/api/v1/studios/${studio.studioId}/webhooks/${endpointId}/deliveries`, params: params(), cookie: studio.cookies.owner });
  expect(status).toBe(200);
  return (body as { deliveries: { eventId: string; type: string; status: string; attempts: number; lastStatusCode: number | null; lastError: string | null }[] }).deliveries;
}

async function finishedSweep(seed: number): Promise<string> {
  const spec = puckSpec();
  spec.scenario.seed = seed;
  spec.scenario.scene = { ...spec.scenario.scene, gapM: 0.01 + seed * 1e-4 } as typeof spec.scenario.scene; // not served from the cache
  const sweep = await submitSweep(db, studio.studioId, { spec });
  await waitForSweep(sweep.id, (row) => row.status === "done");
  return sweep.id;
}

describe("endpoints", () => {
  it("take https, and http only to localhost outside production; a bad URL is named", async () => {
    expect(endpointUrlProblem("https://hooks.gannet-yard.test/kd", true)).toBeNull();
    expect(endpointUrlProblem("http://127.0.0.1:8080/kd", false)).toBeNull();
    expect(endpointUrlProblem("http://127.0.0.1:8080/kd", true)).toBe("the URL must use https://");
    expect(endpointUrlProblem("http://hooks.gannet-yard.test/kd", false)).toMatch(/https:\/\//);
    const bad = await call(endpointsRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/webhooks`, params: { studioId: studio.studioId }, cookie: studio.cookies.owner, body: { url: "ftp://x.test", events: ["sweep.finished"] } });
    expect(bad.status).toBe(400);
    expect(errorOf(bad.body).field).toBe("url");

    const created = await call(endpointsRoute.POST, {
      method: "POST",
      path: `/api/v1/studios/${studio.studioId}/webhooks`,
      params: { studioId: studio.studioId },
      cookie: studio.cookies.owner,
      body: { url: `http://127.0.0.1:${receiver.port}/kickdrift`, events: ["sweep.finished", "catalogue_check.finished", "balance.low"] },
    });
    expect(created.status).toBe(201);
    ({ secret, endpoint: { id: endpointId } } = created.body as { secret: string; endpoint: { id: string } });
    expect(secret).toMatch(/^whsec_/);
  });
});

describe("deliveries", () => {
  it("signs each delivery so that a Standard Webhooks library verifies it, and a replay is recognised by its event id", async () => {
    const sweepId = await finishedSweep(11);
    const queued = await scanWebhookEvents(db);
    expect(queued).toEqual([webhookEventId("sweep.finished", sweepId)]);
    expect(await scanWebhookEvents(db)).toEqual([]); // found again: the same event, nothing new
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 1, retried: 0, failed: 0 });
    expect(receiver.received.map((r) => r.verdict)).toEqual(["accepted"]);
    const first = receiver.received[0];
    const payload = JSON.parse(first.body) as { id: string; type: string; data: { sweep: { id: string; status: string } } };
    expect(payload).toMatchObject({ id: first.id, type: "sweep.finished", data: { sweep: { id: sweepId, status: "done" } } });
    // Our own verifier agrees, refuses a changed body and a timestamp outside the 5-minute window.
    const nowS = Number(first.timestamp);
    expect(() => verifyWebhook(secret, first, first.body, nowS)).not.toThrow();
    expect(() => verifyWebhook(secret, first, first.body.replace("done", "dome"), nowS)).toThrow(WebhookVerificationError);
    expect(() => verifyWebhook(secret, first, first.body, nowS + 301)).toThrow(/tolerance/);

    // A replay of the captured request: the signature still verifies; the receiver drops it by event id.
    await fetch(`http://127.0.0.1:${receiver.port}/kickdrift`, { method: "POST", headers: { "webhook-id": first.id, "webhook-timestamp": first.timestamp, "webhook-signature": first.signature }, body: first.body });
    expect(receiver.received.map((r) => r.verdict)).toEqual(["accepted", "replay"]);

    // "Send again" sends the same event id (a receiver that processed it treats it as a replay).
    const resent = await call(resendRoute.POST, { method: "POST", path: `/api/v1/studios/${studio.studioId}/webhooks/${endpointId}/deliveries/${first.id}/resend`, params: { ...params(), eventId: first.id }, cookie: studio.cookies.owner });
    expect(resent.status).toBe(202);
    await dispatcher.dispatchDue();
    expect(receiver.received.at(-1)).toMatchObject({ id: first.id, verdict: "replay" });
    expect((await deliveries()).find((d) => d.eventId === first.id)).toMatchObject({ status: "delivered", lastStatusCode: 200 });
  });

  it("retries while the receiver is down for a minute and delivers the event once when it is back", async () => {
    const port = receiver.port;
    await receiver.stop();
    const before = receiver.received.length;
    const sweepId = await finishedSweep(12);
    const [eventId] = await scanWebhookEvents(db);
    expect(eventId).toBe(webhookEventId("sweep.finished", sweepId));

    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 1, failed: 0 });
    let log = (await deliveries()).find((d) => d.eventId === eventId);
    expect(log).toMatchObject({ status: "pending", attempts: 1, lastStatusCode: null });
    expect(log?.lastError).toMatch(/could not reach the endpoint/);
    // Retries through the minute it is down (the outbox backoff: 1 s, 5 s, 30 s, …).
    for (const stepS of [2, 6, 31]) {
      offsetMs += stepS * 1000;
      expect((await dispatcher.dispatchDue()).retried).toBe(1);
    }
    offsetMs += 60_000 - 39_000;
    await receiver.start(port);
    offsetMs += 121_000; // past the next backoff step
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 1, retried: 0, failed: 0 });
    offsetMs += 3_600_000;
    expect(await dispatcher.dispatchDue()).toEqual({ delivered: 0, retried: 0, failed: 0 });
    const arrived = receiver.received.slice(before).filter((r) => r.id === eventId);
    expect(arrived.map((r) => r.verdict)).toEqual(["accepted"]);
    log = (await deliveries()).find((d) => d.eventId === eventId);
    expect(log).toMatchObject({ status: "delivered", attempts: 5, lastStatusCode: 200, lastError: null });
  });

  it("logs the receiver's answer code when it refuses", async () => {
    receiver.status = 503;
    const sweepId = await finishedSweep(13);
    const [eventId] = await scanWebhookEvents(db);
    expect(eventId).toBe(webhookEventId("sweep.finished", sweepId));
    expect((await dispatcher.dispatchDue()).retried).toBe(1);
    expect((await deliveries()).find((d) => d.eventId === eventId)).toMatchObject({ status: "pending", attempts: 1, lastStatusCode: 503, lastError: "the endpoint answered HTTP 503" });
    receiver.status = 200;
  });
});
