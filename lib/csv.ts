/**
 * CSV cells of every export (results, envelopes, catalogue checks, ledger, invoices, audit log):
 * RFC 4180 quoting, and a guard so a spreadsheet never runs a cell's text as a formula.
 * Pure and browser-safe.
 */

/**
 * Text that a spreadsheet would read as a formula gets a leading single quote (= + - @, and tab /
 * carriage return as the OWASP guidance on CSV injection adds). Only text is guarded: numbers are
 * written by the exports' number formats, and a leading minus there is a negative number.
 */
export function guardFormula(text: string): string {
  return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
}

/** RFC 4180: quote a field that holds a comma, a double quote, CR or LF; double the quotes inside. */
export function quoteCsvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** A text field, guarded and quoted only where it must be (the results and audit exports). */
export function csvText(text: string): string {
  return quoteCsvField(guardFormula(text));
}

/** One cell of the finance exports (ledger, invoices): always quoted. */
export type CsvValue = string | number | null;

export function csvCell(value: CsvValue): string {
  const text = value === null ? "" : String(value);
  // Numbers keep their sign (written from integers, or decimal strings made from them, never from user text).
  const safe = typeof value === "string" && !/^-?\d+(\.\d+)?$/.test(text) ? guardFormula(text) : text;
  return `"${safe.replaceAll('"', '""')}"`;
}
