import "server-only";

/**
 * Test-mode card outcomes. The numbers are the ones Stripe publishes for test mode; anything else
 * that passes the Luhn check is refused the way test mode refuses a real card.
 */
export type CardOutcome =
  | { ok: true; last4: string }
  | { ok: false; code: "incorrect_number" | "card_declined"; declineCode?: string; message: string };

const APPROVED = new Set(["4242424242424242", "4000056655665556", "5555555555554444", "4000000000000259"]);
/** Stripe's test card whose successful charge is then disputed as fraudulent (a dispute opens right after payment). */
export const DISPUTED_CARDS: Record<string, string> = { "4000000000000259": "fraudulent" };
const DECLINED: Record<string, { declineCode: string; message: string }> = {
  "4000000000000002": { declineCode: "generic_decline", message: "Your card was declined." },
  "4000000000009995": { declineCode: "insufficient_funds", message: "Your card has insufficient funds." },
};

export function normalizeCardNumber(input: string): string {
  return input.replace(/[\s-]/g, "");
}

export function passesLuhn(digits: string): boolean {
  let sum = 0;
  for (let i = 0; i < digits.length; i++) {
    let d = Number(digits[digits.length - 1 - i]);
    if (i % 2 === 1) {
      d *= 2;
      if (d > 9) d -= 9;
    }
    sum += d;
  }
  return sum % 10 === 0;
}

export function cardOutcome(rawNumber: string): CardOutcome {
  const digits = normalizeCardNumber(rawNumber);
  if (!/^\d{12,19}$/.test(digits) || !passesLuhn(digits)) {
    return { ok: false, code: "incorrect_number", message: "Your card number is incorrect." };
  }
  const declined = DECLINED[digits];
  if (declined) return { ok: false, code: "card_declined", ...declined };
  if (!APPROVED.has(digits)) {
    return {
      ok: false,
      code: "card_declined",
      declineCode: "test_mode_live_card",
      message: "Your card was declined. Your request was in test mode, but used a non test card. For a list of valid test cards, visit: https://stripe.com/docs/testing.",
    };
  }
  return { ok: true, last4: digits.slice(-4) };
}

/** A stored card (by its last four digits) charged again later, e.g. an invoice paid with the card on file. */
export function storedCardOutcome(last4: string): CardOutcome {
  for (const [number, declined] of Object.entries(DECLINED)) {
    if (number.endsWith(last4)) return { ok: false, code: "card_declined", ...declined };
  }
  return { ok: true, last4 };
}
