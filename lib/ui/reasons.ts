/**
 * Verdict reasons as a user reads them. The engine names bodies and walls by their 0-based index
 * ("disc 0 crossed wall 2"), and those reasons are stored with the results, so changing the
 * engine's wording would change stored results; the pages show them counted from 1 instead, as
 * the replay, the time series and the scene editor count discs ("disc 1 crossed wall 3").
 */
export function reasonForDisplay(reason: string): string;
export function reasonForDisplay(reason: string | null): string | null;
export function reasonForDisplay(reason: string | null): string | null {
  if (reason === null) return null;
  return reason.replace(/\b(disc|wall) (\d{1,9})\b/g, (_, what: string, index: string) => `${what} ${Number(index) + 1}`);
}
