import "server-only";
import { getTransport, mailFrom } from "./transport";
import type { MailContent } from "./templates";

/** Sends one message; throws if the SMTP server refuses it. */
export async function sendMail(to: string, content: MailContent): Promise<void> {
  const transport = await getTransport();
  await transport.sendMail({ from: mailFrom(), to, subject: content.subject, text: content.text, html: content.html });
}

/**
 * For flows where the HTTP answer must not depend on delivery (password reset answers 202 either
 * way): logs a failure instead of throwing, and reports whether the message went out.
 */
export async function trySendMail(to: string, content: MailContent): Promise<boolean> {
  try {
    await sendMail(to, content);
    return true;
  } catch (error) {
    console.error(`[mail] could not send "${content.subject}"`, error);
    return false;
  }
}
