/**
 * Credit packs of compute minutes, shown on the landing page and sold by the billing issue.
 * Prices are integer cents, before tax (tax handling is out of scope).
 */
export type CreditPack = {
  id: string;
  name: string;
  minutes: number;
  priceCents: number;
  currency: "usd";
  summary: string;
};

export const CREDIT_PACKS: readonly CreditPack[] = [
  {
    id: "pack_tapout",
    name: "Tap-out",
    minutes: 120,
    priceCents: 900,
    currency: "usd",
    summary: "A few small grids to check one contact before a playtest.",
  },
  {
    id: "pack_rebound",
    name: "Rebound",
    minutes: 750,
    priceCents: 4500,
    currency: "usd",
    summary: "A milestone's worth of sweeps across every body pair in a level.",
  },
  {
    id: "pack_longhaul",
    name: "Long Haul",
    minutes: 4000,
    priceCents: 19900,
    currency: "usd",
    summary: "Nightly sweeps for a team shipping on several frame rates.",
  },
] as const;

/** Formats integer cents as a US-dollar amount, e.g. 4500 → "$45.00". */
export function formatPriceCents(priceCents: number, currency: CreditPack["currency"] = "usd"): string {
  return new Intl.NumberFormat("en-US", { style: "currency", currency: currency.toUpperCase() }).format(priceCents / 100);
}

/** Price of one compute minute in the pack, in cents, rounded to a tenth of a cent for display. */
export function centsPerMinute(pack: CreditPack): number {
  return Math.round((pack.priceCents / pack.minutes) * 10) / 10;
}

/** Overage (compute past the prepaid balance, when an admin allows it) is invoiced monthly at this price per minute, in cents, before tax. */
export const OVERAGE_CENTS_PER_MINUTE = 9;

/** The overage price per metered millisecond as Stripe's decimal string: 9 ¢ / 60,000 ms = 0.00015 ¢ (arithmetic). */
export const OVERAGE_UNIT_AMOUNT_DECIMAL = "0.00015";

/** A low-balance e-mail goes to owners and finance when the balance falls to or below this (integer ms). */
export const LOW_BALANCE_MS = 10 * 60_000;

export function findPack(id: string): CreditPack | undefined {
  return CREDIT_PACKS.find((pack) => pack.id === id);
}

/**
 * Days after an overage invoice's due date that overage stays on while it is unpaid; then it is held
 * off until the invoice is paid (lib/billing/overdue.ts; stated in the Billing page's terms).
 */
export const OVERDUE_GRACE_DAYS = 14;

/** Days an overage invoice gives to pay it (the subscription's days_until_due). */
export const OVERAGE_DAYS_UNTIL_DUE = 30;
