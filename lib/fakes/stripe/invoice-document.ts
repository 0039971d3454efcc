/**
 * The fake's hosted invoice page (`hosted_invoice_url`) and invoice PDF (`invoice_pdf`): what a
 * finance person opens and books. Both show the issuer, the customer's name, address and invoice
 * custom fields (Kickdrift's "Tax ID"), every line, the total and what was paid. The PDF is a real
 * PDF made with pdf-lib, set in DejaVu Sans (the dejavu-fonts-ttf package, read from node_modules and
 * subset into each document), which covers Latin, Greek and Cyrillic: a billing name in those scripts
 * prints as written. Characters the font lacks (CJK among them) print as "?".
 */
import "server-only";
import { readFile } from "node:fs/promises";
import { createRequire } from "node:module";
import path from "node:path";
import fontkit from "@pdf-lib/fontkit";
import { PDFDocument, rgb } from "pdf-lib";
import { formatAmount } from "./hosted-page";
import type { StripeObject } from "./store";

type Address = { line1: string | null; line2: string | null; city: string | null; state: string | null; postal_code: string | null; country: string | null };
type CustomField = { name: string; value: string };
type Line = { description: string | null; quantity: number | null; amount: number; currency: string; period: { start: number; end: number } };

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c] as string);
}

const day = (unix: number) => new Date(unix * 1000).toISOString().slice(0, 10);

/** The invoice as lines of text, shared by the page and the PDF so both say the same. */
export function invoiceDocument(invoice: StripeObject): { title: string; header: string[]; billTo: string[]; lines: { text: string; amount: string }[]; totals: { label: string; amount: string }[]; notes: string[] } {
  const currency = String(invoice.currency);
  const address = invoice.customer_address as Address | null;
  const fields = (invoice.custom_fields as CustomField[] | null) ?? [];
  const lines = ((invoice.lines as { data: Line[] }).data ?? []).map((l) => ({
    text: `${l.description ?? "item"}${l.quantity !== null && l.quantity !== undefined ? ` (quantity ${l.quantity})` : ""}${l.period.start !== l.period.end ? ` — ${day(l.period.start)} to ${day(l.period.end)} UTC` : ""}`,
    amount: formatAmount(l.amount, l.currency ?? currency),
  }));
  const transitions = invoice.status_transitions as { finalized_at: number | null; paid_at: number | null };
  const billTo = [
    String(invoice.customer_name ?? ""),
    ...(address
      ? [address.line1, address.line2, [address.postal_code, address.city].filter(Boolean).join(" "), address.state, address.country].filter((x): x is string => Boolean(x))
      : []),
    ...(invoice.customer_email ? [String(invoice.customer_email)] : []),
    ...fields.map((f) => `${f.name}: ${f.value}`),
  ].filter((x) => x !== "");
  return {
    title: `Invoice ${String(invoice.number ?? invoice.id)}`,
    header: [
      `From: ${String(invoice.account_name)}`,
      `Invoice number: ${String(invoice.number ?? "(draft)")}`,
      `Status: ${String(invoice.status)}`,
      ...(transitions.finalized_at ? [`Date of issue: ${day(transitions.finalized_at)}`] : []),
      ...(invoice.due_date ? [`Due: ${day(invoice.due_date as number)}`] : []),
      ...(transitions.paid_at ? [`Paid: ${day(transitions.paid_at)}`] : []),
      ...(invoice.period_start !== invoice.period_end ? [`Period: ${day(invoice.period_start as number)} to ${day(invoice.period_end as number)} UTC`] : []),
    ],
    billTo,
    lines,
    totals: [
      { label: "Total", amount: formatAmount(invoice.total as number, currency) },
      { label: "Amount paid", amount: formatAmount(invoice.amount_paid as number, currency) },
      { label: "Amount remaining", amount: formatAmount(invoice.amount_remaining as number, currency) },
    ],
    notes: [...(invoice.description ? [String(invoice.description)] : []), ...(invoice.footer ? [String(invoice.footer)] : []), "Local Stripe fake, test mode: not a real invoice."],
  };
}

/** A card refused on the invoice's page: shown above the form, as the Checkout page shows it. */
export type InvoicePaymentError = { code: string; declineCode?: string; message: string };

export function renderInvoicePage(invoice: StripeObject, error?: InvoicePaymentError): string {
  const doc = invoiceDocument(invoice);
  const list = (items: string[]) => items.map((t) => `<li>${escapeHtml(t)}</li>`).join("");
  return `<!doctype html>
<html lang="en">
<head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(doc.title)} — local Stripe fake</title>
<style>
  body { font-family: system-ui, sans-serif; background: #f3f4f1; color: #1d2321; margin: 0; }
  main { max-width: 40rem; margin: 3rem auto; background: #fff; border: 1px solid #d5d9d2; border-radius: 8px; padding: 1.5rem; }
  ul { list-style: none; padding: 0; margin: 0 0 1rem; }
  table { width: 100%; border-collapse: collapse; margin-bottom: 1rem; }
  td, th { padding: 0.3rem 0; border-bottom: 1px solid #eceee9; text-align: left; }
  .amount { text-align: right; font-variant-numeric: tabular-nums; }
  .note { font-size: 0.8rem; color: #5b625e; }
  a { color: #2f5d50; }
  label { display: block; margin-top: 0.8rem; font-size: 0.9rem; }
  input { width: 100%; box-sizing: border-box; padding: 0.5rem; font-size: 1rem; border: 1px solid #b9bfb6; border-radius: 4px; }
  button { margin-top: 1rem; width: 100%; padding: 0.6rem; font-size: 1rem; background: #2f5d50; color: #fff; border: 0; border-radius: 4px; }
  .error { background: #fbeaea; border: 1px solid #e4b4b4; color: #7a1f1f; padding: 0.6rem; border-radius: 4px; }
</style></head>
<body><main>
<h1>${escapeHtml(doc.title)}</h1>
<ul data-testid="invoice-header">${list(doc.header)}</ul>
<h2>Bill to</h2>
<ul data-testid="invoice-bill-to">${list(doc.billTo)}</ul>
<table><thead><tr><th scope="col">Description</th><th scope="col" class="amount">Amount</th></tr></thead><tbody>
${doc.lines.map((l) => `<tr><td>${escapeHtml(l.text)}</td><td class="amount">${escapeHtml(l.amount)}</td></tr>`).join("")}
${doc.totals.map((t) => `<tr><td><strong>${escapeHtml(t.label)}</strong></td><td class="amount"><strong>${escapeHtml(t.amount)}</strong></td></tr>`).join("")}
</tbody></table>
${invoice.invoice_pdf ? `<p><a href="${escapeHtml(String(invoice.invoice_pdf))}">Download PDF</a></p>` : ""}
${payForm(invoice, error)}
${doc.notes.map((n) => `<p class="note">${escapeHtml(n)}</p>`).join("")}
</main></body></html>`;
}

/** The card form of an invoice still owed (open or uncollectible, amount remaining above 0). */
function payForm(invoice: StripeObject, error?: InvoicePaymentError): string {
  const owed = (invoice.status === "open" || invoice.status === "uncollectible") && (invoice.amount_remaining as number) > 0;
  if (!owed) return "";
  const amount = formatAmount(invoice.amount_remaining as number, String(invoice.currency));
  const alert = error
    ? `<p class="error" role="alert" data-error-code="${escapeHtml(error.code)}"${error.declineCode ? ` data-decline-code="${escapeHtml(error.declineCode)}"` : ""}>${escapeHtml(error.message)}</p>`
    : "";
  return `<h2>Pay this invoice</h2>
${alert}
<form method="post" action="/i/${escapeHtml(String(invoice.id))}">
  <label for="card_number">Card number</label>
  <input id="card_number" name="card_number" inputmode="numeric" autocomplete="cc-number" required placeholder="4242 4242 4242 4242">
  <button type="submit">Pay ${escapeHtml(amount)}</button>
</form>`;
}

type FontFiles = { regular: Uint8Array; bold: Uint8Array };
let fontFiles: Promise<FontFiles> | null = null;

/**
 * DejaVu Sans regular and bold, read once per process from the installed dejavu-fonts-ttf package
 * (resolved from the working directory at run time, so a bundler never inlines 1.4 MB of font).
 */
function dejaVuSans(): Promise<FontFiles> {
  fontFiles ??= (async () => {
    const resolve = createRequire(path.join(process.cwd(), "package.json")).resolve;
    const dir = path.join(path.dirname(resolve("dejavu-fonts-ttf/package.json")), "ttf");
    const [regular, bold] = await Promise.all([readFile(path.join(dir, "DejaVuSans.ttf")), readFile(path.join(dir, "DejaVuSans-Bold.ttf"))]);
    return { regular, bold };
  })();
  fontFiles.catch(() => {
    fontFiles = null;
  });
  return fontFiles;
}

/** Text the font can draw: a character it has no glyph for prints as "?" rather than failing the document. */
function printable(text: string, has: (codePoint: number) => boolean): string {
  let out = "";
  for (const ch of text) out += has(ch.codePointAt(0)!) ? ch : "?";
  return out;
}

export async function renderInvoicePdf(invoice: StripeObject): Promise<Uint8Array> {
  const doc = invoiceDocument(invoice);
  const pdf = await PDFDocument.create();
  pdf.setTitle(doc.title);
  pdf.setSubject(`${doc.totals[0].label} ${doc.totals[0].amount}`);
  pdf.setProducer("Kickdrift local Stripe fake");
  pdf.setCreator("Kickdrift local Stripe fake");
  // Fixed dates from the invoice itself, so the same invoice gives the same bytes.
  const issued = new Date(((invoice.status_transitions as { finalized_at: number | null }).finalized_at ?? (invoice.created as number)) * 1000);
  pdf.setCreationDate(issued);
  pdf.setModificationDate(issued);
  pdf.registerFontkit(fontkit);
  const files = await dejaVuSans();
  // Subset: only the glyphs used are embedded, so a one-page invoice stays small.
  const font = await pdf.embedFont(files.regular, { subset: true });
  const bold = await pdf.embedFont(files.bold, { subset: true });
  const regularFace = fontkit.create(files.regular);
  const boldFace = fontkit.create(files.bold);
  const drawable = (text: string) => printable(text, (cp) => regularFace.hasGlyphForCodePoint(cp) && boldFace.hasGlyphForCodePoint(cp));
  let page = pdf.addPage([595.28, 841.89]); // A4 in points
  const margin = 50;
  let y = 841.89 - margin;
  const ink = rgb(0.11, 0.14, 0.13);
  const write = (text: string, opts: { size?: number; bold?: boolean; x?: number; right?: boolean } = {}) => {
    const size = opts.size ?? 10;
    const f = opts.bold ? bold : font;
    const safe = drawable(text);
    const x = opts.right ? 595.28 - margin - f.widthOfTextAtSize(safe, size) : (opts.x ?? margin);
    page.drawText(safe, { x, y, size, font: f, color: ink });
  };
  const next = (gap = 14) => {
    y -= gap;
    if (y < margin) {
      page = pdf.addPage([595.28, 841.89]);
      y = 841.89 - margin;
    }
  };
  write(doc.title, { size: 18, bold: true });
  next(26);
  for (const h of doc.header) {
    write(h);
    next();
  }
  next(8);
  write("Bill to", { bold: true });
  next();
  for (const b of doc.billTo) {
    write(b);
    next();
  }
  next(8);
  write("Description", { bold: true });
  write("Amount", { bold: true, right: true });
  next(16);
  for (const l of doc.lines) {
    // Long descriptions are cut to fit beside the amount column; the hosted page shows them whole.
    let text = l.text;
    if (font.widthOfTextAtSize(drawable(text), 10) > 380) {
      while (text.length > 10 && font.widthOfTextAtSize(drawable(`${text}…`), 10) > 380) text = text.slice(0, -1);
      text = `${text}…`;
    }
    write(text);
    write(l.amount, { right: true });
    next();
  }
  next(6);
  for (const t of doc.totals) {
    write(t.label, { bold: true });
    write(t.amount, { bold: true, right: true });
    next();
  }
  next(10);
  for (const n of doc.notes) {
    write(n, { size: 8 });
    next(12);
  }
  return pdf.save();
}

export function renderInvoiceMissingPage(id: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Not found — local Stripe fake</title></head><body><h1>Not found</h1><p>No finalised invoice ${escapeHtml(id)}.</p></body></html>`;
}
