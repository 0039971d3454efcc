import nodemailer, { type Transporter } from "nodemailer";
import { runningMailFake } from "@/lib/fakes/smtp-fake";

export { isMailFakeEnabled } from "./mode";

export function mailFrom(): string {
  return process.env.MAIL_FROM ?? "Kickdrift <no-reply@kickdrift.test>";
}

const transportKey = Symbol.for("kickdrift.mail-transport");
const store = globalThis as unknown as Record<symbol, { signature: string; transporter: Transporter } | undefined>;

async function transportOptions(): Promise<string | { host: string; port: number; secure: false; ignoreTLS: true }> {
  if (process.env.SMTP_URL) return process.env.SMTP_URL;
  const fake = await runningMailFake();
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
