/**
 * The CSV cells every export writes (lib/csv.ts). Quoting per RFC 4180 (Shafranovich, "Common
 * Format and MIME Type for Comma-Separated Values (CSV) Files", 2005, section 2); the formula
 * guard per the OWASP guidance on CSV injection (= + - @ tab CR), read back with papaparse.
 */
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import { csvCell, csvText, guardFormula, quoteCsvField } from "@/lib/csv";

describe("CSV cells", () => {
  it("guard every formula lead character and quote by RFC 4180", () => {
    for (const lead of ["=", "+", "-", "@", "\t", "\r"]) expect(guardFormula(`${lead}1+1`)).toBe(`'${lead}1+1`);
    expect(guardFormula("stable")).toBe("stable");
    expect(quoteCsvField('say "hi", twice')).toBe('"say ""hi"", twice"');
    expect(quoteCsvField("line\nbreak")).toBe('"line\nbreak"');
    expect(quoteCsvField("plain")).toBe("plain");
    expect(csvText("=HYPERLINK(1)")).toBe("'=HYPERLINK(1)");
    expect(csvText("-a, b")).toBe(`"'-a, b"`);
  });

  it("finance cells are always quoted; numbers and decimal strings keep their sign, user text is guarded", () => {
    expect(csvCell(-1500)).toBe(`"-1500"`);
    expect(csvCell("-15.00")).toBe(`"-15.00"`);
    expect(csvCell(null)).toBe(`""`);
    expect(csvCell("@SUM(A1)")).toBe(`"'@SUM(A1)"`);
    expect(csvCell("\tTab lead")).toBe(`"'\tTab lead"`);
    const line = [csvCell("Crateslide, \"bay\" 2"), csvCell(42), csvCell("=1+1")].join(",");
    expect(Papa.parse<string[]>(line).data[0]).toEqual(['Crateslide, "bay" 2', "42", "'=1+1"]);
  });
});
