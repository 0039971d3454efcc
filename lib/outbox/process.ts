/**
 * The server process's outbox dispatcher, created once on globalThis. Other modules add their
 * kinds with `registerOutboxHandler` before or after start; `pokeOutbox()` after a commit that
 * queued something delivers it without waiting for the next poll.
 */
import "server-only";
import type { OutboxRow } from "@/db/schema";
import { deliverMail, MAIL_KIND } from "./mail";
import { OutboxDispatcher, type OutboxHandler } from "./outbox";

const key = Symbol.for("kickdrift.outbox");
interface Holder {
  handlers: Record<string, OutboxHandler>;
  dispatcher?: OutboxDispatcher;
}
function holder(): Holder {
  const store = globalThis as unknown as Record<symbol, Holder | undefined>;
  return (store[key] ??= { handlers: { [MAIL_KIND]: (row: OutboxRow) => deliverMail(row) } });
}

export function registerOutboxHandler(kind: string, handler: OutboxHandler): void {
  holder().handlers[kind] = handler;
}

/** The handlers known to this process (the dispatcher reads this object, so later registrations count). */
export function outboxHandlers(): Record<string, OutboxHandler> {
  return holder().handlers;
}

export async function startProcessOutbox(): Promise<OutboxDispatcher> {
  const h = holder();
  if (h.dispatcher) return h.dispatcher;
  const { getDb } = await import("@/db/client");
  h.dispatcher = new OutboxDispatcher({ db: await getDb(), handlers: h.handlers });
  h.dispatcher.start();
  return h.dispatcher;
}

export function pokeOutbox(): void {
  holder().dispatcher?.poke();
}
