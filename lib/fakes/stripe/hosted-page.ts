import "server-only";
import type { StripeObject } from "./store";

/** The fake's own payment page for a Checkout Session: a plain HTML form, no scripts. */

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c] as string);
}

export function formatAmount(cents: number, currency: string): string {
  const whole = Math.trunc(cents / 100);
  const rest = String(Math.abs(cents % 100)).padStart(2, "0");
  return `${whole}.${rest} ${currency.toUpperCase()}`;
}

function layout(title: string, body: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title>
<style>
  body { font-family: system-ui, sans-serif; background: #f3f4f1; color: #1d2321; margin: 0; }
  main { max-width: 28rem; margin: 3rem auto; background: #fff; border: 1px solid #d5d9d2; border-radius: 8px; padding: 1.5rem; }
  h1 { font-size: 1.2rem; margin: 0 0 0.25rem; }
  .note { font-size: 0.8rem; color: #5b625e; margin: 0 0 1rem; }
  table { width: 100%; border-collapse: collapse; margin-bottom: 1rem; }
  td { padding: 0.3rem 0; border-bottom: 1px solid #eceee9; }
  td.amount { text-align: right; font-variant-numeric: tabular-nums; }
  label { display: block; font-size: 0.85rem; margin: 0.75rem 0 0.25rem; }
  input { width: 100%; box-sizing: border-box; padding: 0.5rem; font-size: 1rem; border: 1px solid #b9bfb6; border-radius: 4px; }
  button { margin-top: 1rem; width: 100%; padding: 0.6rem; font-size: 1rem; background: #2f5d50; color: #fff; border: 0; border-radius: 4px; }
  .error { background: #fbeaea; border: 1px solid #e4b4b4; color: #7a1f1f; padding: 0.6rem; border-radius: 4px; }
  a { color: #2f5d50; }
</style>
</head>
<body><main>${body}</main></body>
</html>`;
}

export function renderPaymentPage(session: StripeObject, lineItems: StripeObject[], error?: { code: string; declineCode?: string; message: string }): string {
  const rows = lineItems
    .map((li) => `<tr><td>${escapeHtml(String(li.description ?? "item"))} × ${String(li.quantity)}</td><td class="amount">${formatAmount(li.amount_total as number, li.currency as string)}</td></tr>`)
    .join("");
  const total = formatAmount(session.amount_total as number, session.currency as string);
  const errorBlock = error
    ? `<p class="error" role="alert" data-error-code="${escapeHtml(error.code)}"${error.declineCode ? ` data-decline-code="${escapeHtml(error.declineCode)}"` : ""}>${escapeHtml(error.message)} (<code>${escapeHtml(error.code)}</code>${error.declineCode ? `, <code>${escapeHtml(error.declineCode)}</code>` : ""})</p>`
    : "";
  const email = (session.customer_details as { email?: string | null } | null)?.email ?? (session.customer_email as string | null) ?? "";
  const cancel = session.cancel_url ? `<p><a href="${escapeHtml(session.cancel_url as string)}">Cancel and go back</a></p>` : "";
  return layout(
    "Pay — local Stripe fake",
    `<h1>Pay ${escapeHtml(total)}</h1>
<p class="note">Local Stripe fake, test mode. Card 4242 4242 4242 4242 is approved; 4000 0000 0000 0002 is declined.</p>
<table><tbody>${rows}<tr><td><strong>Total</strong></td><td class="amount"><strong>${escapeHtml(total)}</strong></td></tr></tbody></table>
${errorBlock}
<form method="post" action="/c/pay/${escapeHtml(session.id)}">
  <label for="email">E-mail</label>
  <input id="email" name="email" type="email" autocomplete="email" value="${escapeHtml(email)}">
  <label for="card_number">Card number</label>
  <input id="card_number" name="card_number" inputmode="numeric" autocomplete="cc-number" required placeholder="4242 4242 4242 4242">
  <label for="card_expiry">Expiry (MM / YY)</label>
  <input id="card_expiry" name="card_expiry" autocomplete="cc-exp" placeholder="12 / 34">
  <label for="card_cvc">CVC</label>
  <input id="card_cvc" name="card_cvc" inputmode="numeric" autocomplete="cc-csc" placeholder="123">
  <button type="submit">Pay ${escapeHtml(total)}</button>
</form>
${cancel}`,
  );
}

export function renderClosedPage(session: StripeObject): string {
  const status = String(session.status);
  const body =
    status === "complete"
      ? `<h1>Already paid</h1><p>This Checkout Session is complete.</p>${session.success_url ? `<p><a href="${escapeHtml((session.success_url as string).replace(/\{CHECKOUT_SESSION_ID\}/g, session.id))}">Continue</a></p>` : ""}`
      : `<h1>Session ${escapeHtml(status)}</h1><p>This Checkout Session is no longer available (status: ${escapeHtml(status)}).</p>`;
  return layout("Checkout — local Stripe fake", body);
}

export function renderMissingPage(id: string): string {
  return layout("Not found — local Stripe fake", `<h1>Not found</h1><p>No such Checkout Session: ${escapeHtml(id)}</p>`);
}
