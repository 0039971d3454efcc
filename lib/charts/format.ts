/**
 * Number formatting for axes, legends and tooltips: SI prefixes ("1 k", "2 ms", "10 kN/m"),
 * a fixed number of significant digits, no floating-point noise ("0.30000000000000004").
 */

const PREFIXES: readonly { exponent: number; symbol: string }[] = [
  { exponent: -15, symbol: "f" },
  { exponent: -12, symbol: "p" },
  { exponent: -9, symbol: "n" },
  { exponent: -6, symbol: "µ" },
  { exponent: -3, symbol: "m" },
  { exponent: 0, symbol: "" },
  { exponent: 3, symbol: "k" },
  { exponent: 6, symbol: "M" },
  { exponent: 9, symbol: "G" },
  { exponent: 12, symbol: "T" },
];

/** A number with at most `digits` significant digits, trailing zeros removed, −0 as 0. */
export function formatSignificant(value: number, digits: number): string {
  if (!Number.isFinite(value)) return value > 0 ? "∞" : value < 0 ? "−∞" : "NaN";
  if (value === 0) return "0";
  const text = Number(value.toPrecision(digits)).toString();
  // Number#toString switches to exponents below 1e-6; spell those out as a coefficient × 10^n.
  if (text.includes("e")) return formatExponent(value, digits);
  return text.replace("-", "−");
}

/** Coefficient and power of ten: 2.5e-7 → "2.5e-7". */
export function formatExponent(value: number, digits: number): string {
  const [coefficient, exponent] = Number(value.toPrecision(digits)).toExponential().split("e");
  return `${trimZeros(coefficient).replace("-", "−")}e${Number(exponent)}`;
}

function trimZeros(text: string): string {
  return text.includes(".") ? text.replace(/0+$/, "").replace(/\.$/, "") : text;
}

/**
 * Value with an SI prefix on its unit: formatSI(0.002, "s") → "2 ms", formatSI(1e4, "") → "10 k",
 * formatSI(0.005, "kg") → "5 g". Dimensionless values take prefixes only from 1 k up; below 1
 * they are plain decimals down to 0.001 and exponents below ("1e-6"), because "100 m" without a
 * unit reads as metres.
 */
export function formatSI(value: number, unit: string, digits = 3): string {
  if (!Number.isFinite(value)) return formatSignificant(value, digits);
  let baseUnit = unit;
  let scaled = value;
  // The kilogram carries its prefix already: prefix the gram instead (0.005 kg → 5 g).
  if (unit === "kg") {
    baseUnit = "g";
    scaled = value * 1000;
  }
  const withUnit = (text: string, symbol: string) => {
    const suffix = `${symbol}${baseUnit}`;
    return suffix ? `${text} ${suffix}` : text;
  };
  if (scaled === 0) return withUnit("0", "");
  const magnitude = Math.abs(scaled);
  if (baseUnit === "" && magnitude < 1) {
    return Number(magnitude.toPrecision(digits)) >= 1e-3 ? formatSignificant(scaled, digits) : formatExponent(scaled, digits);
  }
  // Round first so 999.95 → "1 k", not "1000".
  const rounded = Number(magnitude.toPrecision(digits));
  let index = PREFIXES.findIndex((p) => p.exponent === Math.floor(Math.log10(rounded) / 3) * 3);
  if (index < 0) index = rounded < 1 ? 0 : PREFIXES.length - 1;
  const prefix = PREFIXES[index];
  const mantissa = Number((scaled / 10 ** prefix.exponent).toPrecision(digits));
  const text = formatSignificant(mantissa, digits);
  return withUnit(text, prefix.symbol);
}

/** Tooltip precision: six significant digits with an SI prefix. */
export function formatPrecise(value: number, unit: string): string {
  return formatSI(value, unit, 6);
}
