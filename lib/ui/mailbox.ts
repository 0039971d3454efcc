/**
 * The local mailbox (/mail) exists only while the in-process fake SMTP server runs,
 * which the server starts when no SMTP_URL is configured (see the shared contract).
 */
export function mailboxEnabled(): boolean {
  return !process.env.SMTP_URL;
}
