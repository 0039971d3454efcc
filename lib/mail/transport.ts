import "server-only";
import nodemailer, { type Transporter } from "nodemailer";

export { isMailFakeEnabled } from "./mode";

export function mailFrom(): string {
  return process.env.MAIL_FROM ?? "Kickdrift <no-reply@kickdrift.test>";
}

const transportKey = Symbol.for("kickdrift.mail-transport");
const store = globalThis as unknown as Record<symbol, { signature: string; transporter: Transporter } | undefined>;

/** An SMTP server started in this process (the demo's local mail fake), as its starter announced it. */
export interface LocalMailServer {
  host: string;
  port: number;
}
const localKey = Symbol.for("kickdrift.local-mail-server");
const localStore = globalThis as unknown as Record<symbol, Promise<LocalMailServer> | undefined>;

/**
 * Whoever starts a mail server in this process (the boot, on a demo or test instance) tells the
 * transport where it listens; undefined when it stops. The app itself never starts or imports one.
 */
export function setLocalMailServer(server: Promise<LocalMailServer> | undefined): void {
  localStore[localKey] = server;
}

async function transportOptions(): Promise<string | { host: string; port: number; secure: false; ignoreTLS: true }> {
  if (process.env.SMTP_URL) return process.env.SMTP_URL;
  const fake = await localStore[localKey];
  return {
    // MAIL_FAKE_HOST: the fake runs as its own service (docker-compose.yml), not in this process.
    host: fake?.host ?? (process.env.MAIL_FAKE_HOST || "127.0.0.1"),
    port: fake?.port ?? Number(process.env.MAIL_FAKE_PORT ?? 2525),
    secure: false,
    ignoreTLS: true,
  };
}

export async function getTransport(): Promise<Transporter> {
  const options = await transportOptions();
  const signature = JSON.stringify(options);
  const cached = store[transportKey];
  if (cached?.signature === signature) return cached.transporter;
  const transporter = nodemailer.createTransport(options);
  store[transportKey] = { signature, transporter };
  return transporter;
}
