import "server-only";

/**
 * Exact decimal arithmetic for invoice lines: quantity × unit price in cents, rounded once to an integer
 * number of cents. Values are held as BigInt scaled by 10^12 (Stripe allows 12 decimal places on
 * `unit_amount_decimal`), so no binary floating point touches money.
 */
const SCALE_DIGITS = 12;
const SCALE = 10n ** BigInt(SCALE_DIGITS);

/** Parses "12", "12.5", "0.000125" (and plain integers) into a scaled BigInt; rejects anything else. */
export function toScaled(value: string | number): bigint {
  const text = typeof value === "number" ? numberToPlainString(value) : value.trim();
  const m = /^(-?)(\d+)(?:\.(\d+))?$/.exec(text);
  if (!m) throw new Error(`not a decimal number: ${text}`);
  const [, sign, whole, frac = ""] = m;
  if (frac.length > SCALE_DIGITS) throw new Error(`more than ${SCALE_DIGITS} decimal places: ${text}`);
  const scaled = BigInt(whole) * SCALE + BigInt(frac.padEnd(SCALE_DIGITS, "0") || "0");
  return sign === "-" ? -scaled : scaled;
}

function numberToPlainString(n: number): string {
  if (!Number.isFinite(n)) throw new Error(`not a finite number: ${n}`);
  if (Number.isInteger(n)) return BigInt(n).toString();
  // toFixed gives a plain (non-exponent) form; trailing zeros are harmless.
  return n.toFixed(SCALE_DIGITS);
}

/** A scaled value back to the shortest decimal string ("12.5", "3"). */
export function scaledToString(scaled: bigint): string {
  const negative = scaled < 0n;
  const abs = negative ? -scaled : scaled;
  const whole = abs / SCALE;
  const frac = (abs % SCALE).toString().padStart(SCALE_DIGITS, "0").replace(/0+$/, "");
  return `${negative ? "-" : ""}${whole}${frac ? `.${frac}` : ""}`;
}

/** quantity × unitAmountDecimal (cents), rounded half away from zero to whole cents. */
export function lineAmountCents(quantity: string | number, unitAmountDecimal: string | number): number {
  const product = toScaled(quantity) * toScaled(unitAmountDecimal); // scaled by SCALE²
  const divisor = SCALE * SCALE;
  const negative = product < 0n;
  const abs = negative ? -product : product;
  let cents = abs / divisor;
  if ((abs % divisor) * 2n >= divisor) cents += 1n;
  const result = Number(negative ? -cents : cents);
  if (!Number.isSafeInteger(result)) throw new Error("amount out of range");
  return result;
}

/** Sum of decimal strings, exact. */
export function sumDecimal(values: Array<string | number>): string {
  return scaledToString(values.reduce<bigint>((acc, v) => acc + toScaled(v), 0n));
}

/** Aggregated values reported as JSON numbers (Stripe's `aggregated_value` is a float). */
export function decimalToNumber(value: string): number {
  return Number(value);
}
