/**
 * The local mail fake (and with it the /mail mailbox) is on exactly when no SMTP_URL is configured.
 * Free of imports, so the layout and pages can ask without bundling nodemailer.
 */
export function isMailFakeEnabled(): boolean {
  return !process.env.SMTP_URL;
}
