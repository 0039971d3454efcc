/**
 * Server start: the outbox handler that delivers webhooks, and the scan that finds finished,
 * failed and paused sweeps (lib/webhooks/webhooks.ts) every second on a timer of its own — off
 * the queue runner's path, so a slow scan or a slow endpoint never delays a chunk.
 */
import "server-only";
import type { Db } from "@/db/client";
import { pokeOutbox, registerOutboxHandler } from "@/lib/outbox/process";
import { deliverWebhook, scanWebhookEvents, WEBHOOK_KIND } from "./webhooks";

export const WEBHOOK_SCAN_MS = 1_000;

const key = Symbol.for("kickdrift.webhooks");

export function startWebhooks(db: Db): void {
  registerOutboxHandler(WEBHOOK_KIND, (row) => deliverWebhook(db, row));
  const store = globalThis as unknown as Record<symbol, NodeJS.Timeout | undefined>;
  if (store[key]) return;
  let scanning = false;
  const timer = setInterval(() => {
    if (scanning) return;
    scanning = true;
    scanWebhookEvents(db)
      .then((queued) => {
        if (queued.length > 0) pokeOutbox();
      })
      .catch((error: unknown) => console.error("[kickdrift] webhook scan:", error))
      .finally(() => {
        scanning = false;
      });
  }, WEBHOOK_SCAN_MS);
  timer.unref?.();
  store[key] = timer;
}
