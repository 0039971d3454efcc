import "server-only";
import type { AddressInfo } from "node:net";
import { SMTPServer } from "smtp-server";
import { simpleParser, type AddressObject } from "mailparser";
import { getDb } from "@/db/client";
import { newId } from "@/db/ids";
import { mailMessages } from "@/db/schema";
import { setLocalMailServer } from "@/lib/mail/transport";

/**
 * A local SMTP server that speaks the real protocol (so the app's nodemailer transport is exercised
 * end to end) and stores every message in mail_messages for the /mail page and the tests.
 */
export interface MailFake {
  host: string;
  port: number;
  close(): Promise<void>;
}

const MAX_MESSAGE_BYTES = 2 * 1024 * 1024;
const fakeKey = Symbol.for("kickdrift.mail-fake");
const store = globalThis as unknown as Record<symbol, Promise<MailFake> | undefined>;

/** The running fake in this process, if any. */
export function runningMailFake(): Promise<MailFake> | undefined {
  return store[fakeKey];
}

/** Every http(s) link in the text and the hrefs of the HTML, in order of first appearance. */
export function extractLinks(text: string, html: string): string[] {
  const found: string[] = [];
  for (const m of text.matchAll(/https?:\/\/[^\s<>"')\]]+/g)) found.push(m[0]);
  for (const m of html.matchAll(/href\s*=\s*"([^"]+)"/gi)) {
    const href = m[1].replaceAll("&amp;", "&");
    if (/^https?:\/\//.test(href)) found.push(href);
  }
  return [...new Set(found)];
}

function addressesOf(value: AddressObject | AddressObject[] | undefined): string {
  if (!value) return "";
  return (Array.isArray(value) ? value : [value])
    .flatMap((a) => a.value.map((v) => v.address ?? ""))
    .filter(Boolean)
    .join(", ");
}

/** Starts the fake once per process (idempotent); port 0 picks a free port. */
export function startMailFake(options: { port?: number; host?: string } = {}): Promise<MailFake> {
  const existing = store[fakeKey];
  if (existing) return existing;
  const host = options.host ?? "127.0.0.1";
  const port = options.port ?? Number(process.env.MAIL_FAKE_PORT ?? 2525);
  const started = new Promise<MailFake>((resolve, reject) => {
    const server = new SMTPServer({
      authOptional: true,
      disabledCommands: ["STARTTLS", "AUTH"],
      size: MAX_MESSAGE_BYTES,
      banner: "Kickdrift local mail fake",
      logger: false,
      onData(stream, session, callback) {
        simpleParser(stream)
          .then(async (parsed) => {
            const text = parsed.text ?? "";
            const html = typeof parsed.html === "string" ? parsed.html : "";
            const envelopeTo = session.envelope.rcptTo.map((r) => r.address).join(", ");
            const db = await getDb();
            await db.insert(mailMessages).values({
              id: newId("msg"),
              fromAddress: addressesOf(parsed.from),
              toAddresses: addressesOf(parsed.to) || envelopeTo,
              subject: parsed.subject ?? "",
              text,
              html,
              links: extractLinks(text, html),
            });
            callback();
          })
          .catch((error: unknown) => callback(error instanceof Error ? error : new Error(String(error))));
      },
    });
    server.on("error", (error) => console.error("[mail-fake]", error));
    const onListenError = (error: Error) => reject(error);
    server.server.once("error", onListenError);
    server.listen(port, host, () => {
      server.server.off("error", onListenError);
      const address = server.server.address() as AddressInfo;
      resolve({
        host,
        port: address.port,
        close: () =>
          new Promise<void>((done) => {
            store[fakeKey] = undefined;
            setLocalMailServer(undefined);
            server.close(() => done());
          }),
      });
    });
  });
  store[fakeKey] = started;
  setLocalMailServer(started);
  started.catch(() => {
    store[fakeKey] = undefined;
    setLocalMailServer(undefined);
  });
  return started;
}
