/** One CSV cell of our exports (ledger, invoices), RFC 4180 quoting. */
export type CsvValue = string | number | null;

export function csvCell(value: CsvValue): string {
  const text = value === null ? "" : String(value);
  // Quote always; a text starting with = + - @ is prefixed so spreadsheets never run it as a formula
  // (numbers keep their sign: they are written from integers, never from user text).
  const safe = /^[=+\-@]/.test(text) && typeof value === "string" && !/^-?\d+(\.\d+)?$/.test(text) ? `'${text}` : text;
  return `"${safe.replaceAll('"', '""')}"`;
}
