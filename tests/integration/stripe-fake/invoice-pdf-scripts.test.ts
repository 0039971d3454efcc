/**
 * The fake's invoice PDF prints billing names and addresses outside WinAnsi as written: it is set in
 * DejaVu Sans (Latin, Greek, Cyrillic). The text is read back by an independent PDF reader (unpdf,
 * Mozilla's PDF.js), through the font's ToUnicode map, as a finance tool would read it. CJK is not in
 * the font and prints as "?" (stated in lib/fakes/stripe/invoice-document.ts).
 */
import { describe, expect, it } from "vitest";
import Stripe from "stripe";
import { extractText, getDocumentProxy } from "unpdf";
import type { StripeFake } from "@/lib/fakes/stripe";
import { startFakeForFile } from "./helpers";

let fake: StripeFake;
let stripe: Stripe;
startFakeForFile((started) => ({ fake, stripe } = started));

async function pdfOf(url: string): Promise<{ bytes: Buffer; text: string }> {
  const res = await fetch(url);
  expect(res.status).toBe(200);
  expect(res.headers.get("content-type")).toBe("application/pdf");
  const bytes = Buffer.from(await res.arrayBuffer());
  const { text } = await extractText(await getDocumentProxy(new Uint8Array(bytes)), { mergePages: true });
  return { bytes, text };
}

describe("invoice PDF in other scripts", () => {
  it("keeps a Cyrillic billing name, a Greek city and a Latin address with diacritics; CJK prints as ?", async () => {
    const customer = await stripe.customers.create({
      name: "Студия «Лисий хвост»",
      email: "books@lisiy-khvost.test",
      address: { line1: "Οδός Ερμού 12", city: "Αθήνα", postal_code: "10563", country: "GR" },
      invoice_settings: { custom_fields: [{ name: "Tax ID", value: "EL 123 456 789" }] },
    });
    const draft = await stripe.invoices.create({ customer: customer.id, collection_method: "send_invoice", days_until_due: 30, description: "Пакет минут: Rebound, Øresund-Kühlung" });
    const invoice = await stripe.invoices.finalizeInvoice(draft.id!);
    expect(invoice.invoice_pdf).toBe(`${fake.url}/i/${invoice.id}/pdf`);

    const { bytes, text } = await pdfOf(invoice.invoice_pdf!);
    expect(text).toContain("Студия «Лисий хвост»");
    expect(text).toContain("Οδός Ερμού 12");
    expect(text).toContain("10563 Αθήνα");
    expect(text).toContain("Tax ID: EL 123 456 789");
    expect(text).toContain("Пакет минут: Rebound, Øresund-Kühlung");
    expect(text).toContain(`Invoice ${invoice.number}`);
    // The same invoice gives the same bytes (font subset included).
    expect((await pdfOf(invoice.invoice_pdf!)).bytes.equals(bytes)).toBe(true);

    const cjk = await stripe.customers.create({ name: "鳴門スタジオ Naruto", email: "books@naruto.test" });
    const cjkDraft = await stripe.invoices.create({ customer: cjk.id, collection_method: "send_invoice", days_until_due: 30, description: "Compute minutes" });
    const cjkInvoice = await stripe.invoices.finalizeInvoice(cjkDraft.id!);
    const { text: cjkText } = await pdfOf(cjkInvoice.invoice_pdf!);
    // Six characters DejaVu Sans has no glyph for, each printed as "?"; the Latin part survives.
    expect(cjkText).toContain("?????? Naruto");
  });
});
