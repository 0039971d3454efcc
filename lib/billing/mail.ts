/** Billing messages: purchase receipts, finalised invoices, low balance. Queued through the outbox (lib/outbox/mail.ts). */
import "server-only";
import { appBaseUrl } from "@/lib/auth/config";
import type { MailContent } from "@/lib/mail/templates";
import { formatMinutes } from "./format";
import { formatPriceCents } from "./packs";

function escapeHtml(value: string): string {
  return value.replaceAll("&", "&amp;").replaceAll("<", "&lt;").replaceAll(">", "&gt;").replaceAll('"', "&quot;").replaceAll("'", "&#39;");
}

function message(subject: string, lines: string[], link: { label: string; url: string }, documents: { label: string; url: string }[] = []): MailContent {
  const footer = "Prices are before tax; tax handling is out of scope.";
  const links = [...documents, link];
  return {
    subject,
    text: `${lines.join("\n")}\n\n${links.map((l) => `${l.label}: ${l.url}`).join("\n")}\n\n${footer}\n`,
    html: `<!doctype html><html><body style="font-family:system-ui,sans-serif;color:#1b2330;max-width:560px;margin:24px auto">
<h1 style="font-size:20px">${escapeHtml(subject)}</h1>${lines.map((l) => `<p style="margin:0 0 12px">${escapeHtml(l)}</p>`).join("")}
${links.map((l) => `<p><a href="${escapeHtml(l.url)}">${escapeHtml(l.label)}</a></p>`).join("")}<p style="font-size:12px;color:#5b6472">${escapeHtml(footer)}</p></body></html>`,
  };
}

const billingUrl = (studioId: string) => `${appBaseUrl()}/studios/${encodeURIComponent(studioId)}/billing`;

export function receiptMail(input: { studioId: string; studioName: string; packName: string; minutes: number; amountCents: number; sessionId: string }): MailContent {
  return message(
    `Receipt: ${input.packName} pack for ${input.studioName}`,
    [
      `Thank you. ${input.studioName} bought the ${input.packName} pack: ${input.minutes} compute minutes for ${formatPriceCents(input.amountCents)}.`,
      `The minutes are on the studio's balance now. Reference: ${input.sessionId}.`,
    ],
    { label: "Open billing", url: billingUrl(input.studioId) },
  );
}

export function invoiceFinalizedMail(input: {
  studioId: string;
  studioName: string;
  number: string;
  kind: "overage" | "pack";
  status: string;
  quantityMs: number;
  totalCents: number;
  periodStart: Date;
  periodEnd: Date;
  hostedInvoiceUrl: string | null;
  invoicePdfUrl: string | null;
}): MailContent {
  const period = `${input.periodStart.toISOString().slice(0, 10)} – ${input.periodEnd.toISOString().slice(0, 10)}`;
  const what =
    input.kind === "pack"
      ? `Invoice ${input.number} is for a compute-minute pack purchase of ${formatMinutes(input.quantityMs)} minutes: ${formatPriceCents(input.totalCents)}${input.status === "paid" ? ", paid by card at purchase" : ""}.`
      : `Invoice ${input.number} covers overage compute of ${formatMinutes(input.quantityMs)} minutes for ${period} (UTC): ${formatPriceCents(input.totalCents)}.`;
  const documents = [
    ...(input.hostedInvoiceUrl ? [{ label: "View the invoice online", url: input.hostedInvoiceUrl }] : []),
    ...(input.invoicePdfUrl ? [{ label: "Download the invoice PDF", url: input.invoicePdfUrl }] : []),
  ];
  return message(`Invoice ${input.number} for ${input.studioName}`, [what], { label: "Open invoices", url: `${appBaseUrl()}/studios/${encodeURIComponent(input.studioId)}/invoices` }, documents);
}

export function lowBalanceMail(input: { studioId: string; studioName: string; balanceMs: number }): MailContent {
  return message(
    `${input.studioName} is low on compute minutes`,
    [`${input.studioName} has ${formatMinutes(Math.max(0, input.balanceMs))} compute minutes left. Sweeps pause when the balance runs out unless overage is allowed.`],
    { label: "Buy a pack", url: billingUrl(input.studioId) },
  );
}

export function paymentFailedMail(input: { studioId: string; studioName: string; packName: string; amountCents: number; sessionId: string; reason: string }): MailContent {
  return message(
    `Payment failed: ${input.packName} pack for ${input.studioName}`,
    [
      `The bank payment of ${formatPriceCents(input.amountCents)} for the ${input.packName} pack did not go through: ${input.reason}.`,
      `No compute minutes were added and nothing was charged. Buy the pack again with a card or another account. Reference: ${input.sessionId}.`,
    ],
    { label: "Open billing", url: billingUrl(input.studioId) },
  );
}

export function refundMail(input: { studioId: string; studioName: string; amountCents: number; takenBackMs: number; reference: string }): MailContent {
  return message(
    `Refund of ${formatPriceCents(input.amountCents)} to ${input.studioName}`,
    [
      `${formatPriceCents(input.amountCents)} of a pack purchase was refunded to ${input.studioName}; ${formatMinutes(input.takenBackMs)} compute minutes were taken back from the balance.`,
      `If the balance is now below zero, sweeps pause until a top-up brings it back. Reference: ${input.reference}.`,
    ],
    { label: "Open billing", url: billingUrl(input.studioId) },
  );
}

export function disputeMail(input: { studioId: string; studioName: string; amountCents: number; takenBackMs: number; reference: string; outcome: "opened" | "lost" }): MailContent {
  return input.outcome === "opened"
    ? message(
        `A payment by ${input.studioName} is disputed`,
        [
          `The card issuer disputes a pack payment of ${formatPriceCents(input.amountCents)} by ${input.studioName}. Nothing changes on the balance unless the dispute is lost.`,
          `Reference: ${input.reference}.`,
        ],
        { label: "Open billing", url: billingUrl(input.studioId) },
      )
    : message(
        `Dispute lost: ${formatPriceCents(input.amountCents)} returned to the card of ${input.studioName}`,
        [
          `The dispute over a pack payment of ${formatPriceCents(input.amountCents)} was decided for the cardholder; ${formatMinutes(input.takenBackMs)} compute minutes were taken back from the balance.`,
          `If the balance is now below zero, sweeps pause until a top-up brings it back. Reference: ${input.reference}.`,
        ],
        { label: "Open billing", url: billingUrl(input.studioId) },
      );
}

const NOTICE_HEADLINE = { payment_failed: "Payment failed", overdue: "Overdue", uncollectible: "Unpaid" } as const;

export function invoicePaymentDueMail(input: {
  studioId: string;
  studioName: string;
  number: string;
  amountCents: number;
  notice: keyof typeof NOTICE_HEADLINE;
  dueAt: Date | null;
  overageOffAt: Date | null;
  graceDays: number;
  /** The pay link, given the Billing page's URL to fall back on. */
  payUrl: (billingPageUrl: string) => string;
}): MailContent {
  const day = (d: Date) => d.toISOString().slice(0, 10);
  const what =
    input.notice === "payment_failed"
      ? `The payment of invoice ${input.number} (${formatPriceCents(input.amountCents)}) did not go through.`
      : input.notice === "overdue"
        ? `Invoice ${input.number} (${formatPriceCents(input.amountCents)}) is past its due date${input.dueAt ? ` of ${day(input.dueAt)}` : ""}.`
        : `Invoice ${input.number} (${formatPriceCents(input.amountCents)}) is still unpaid and has been marked uncollectible.`;
  // Stripe sends invoice.overdue when the grace period ends (the account's automation is set to it), and
  // that notice starts the hold.
  const consequence = input.notice === "overdue"
    ? `Its grace period of ${input.graceDays} days after the due date has ended, so overage is switched off for ${input.studioName} until it is paid; prepaid minutes keep working.`
    : input.overageOffAt
    ? `If it is still unpaid on ${day(input.overageOffAt)} (UTC, ${input.graceDays} days after the due date), overage is switched off for ${input.studioName} until it is paid; prepaid minutes keep working.`
    : `Overage is switched off ${input.graceDays} days after the due date if the invoice is still unpaid; prepaid minutes keep working.`;
  return message(`${NOTICE_HEADLINE[input.notice]}: invoice ${input.number} for ${input.studioName}, ${formatPriceCents(input.amountCents)}`, [what, consequence, "Paying it switches overage back on as the studio had it."], {
    label: "Pay the invoice",
    url: input.payUrl(billingUrl(input.studioId)),
  });
}

export function subscriptionEndedMail(input: { studioId: string; studioName: string }): MailContent {
  return message(
    `Overage billing for ${input.studioName} was cancelled`,
    [`The overage subscription of ${input.studioName} was cancelled at the payment provider. Invoices already issued stay payable; if overage is allowed, the next overage starts a new subscription.`],
    { label: "Open billing", url: billingUrl(input.studioId) },
  );
}
