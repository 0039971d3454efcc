/**
 * Catalogue files as a studio would send them: every problem at once with row and column, the
 * limits stated in the message, and the awkward files spreadsheets produce (byte-order mark,
 * semicolons, Latin-1, formula-like cells).
 */
import { describe, expect, it } from "vitest";
import { CATALOGUE_LIMITS, describeProblem, parseCatalogueFile, tableToCsv, validateTable } from "@/lib/catalogues/format";
import { CRATESLIDE_CATALOGUE_CSV } from "@/lib/catalogues/demo";

const encode = (text: string) => new TextEncoder().encode(text);
const HEADER = "name,mass_kg,radius_m,top_speed_m_per_s,restitution,group";

describe("a valid catalogue", () => {
  it("reads the Crateslide demo file into objects with units", () => {
    const parsed = parseCatalogueFile(encode(CRATESLIDE_CATALOGUE_CSV), "crateslide.csv");
    expect(parsed.problems).toEqual([]);
    expect(parsed.objects?.length).toBe(5);
    expect(parsed.objects?.[1]).toEqual({ name: "coin", massKg: 0.6, radiusM: 0.25, topSpeedMPerS: 3, restitution: 0.6, group: "loot", friction: 0.3 });
    expect(parsed.objects?.[2]).toMatchObject({ name: "barrel", friction: 0.4, rollingResistance: 0.02 });
  });

  it("reads JSON with the same columns, as an array or under objects", () => {
    const rows = [{ name: "crate", mass_kg: 3, radius_m: 0.4, top_speed_m_per_s: 2.5, restitution: 0.4 }];
    for (const text of [JSON.stringify(rows), JSON.stringify({ objects: rows })]) {
      const parsed = parseCatalogueFile(encode(text), "c.json");
      expect(parsed.format).toBe("json");
      expect(parsed.objects).toEqual([{ name: "crate", massKg: 3, radiusM: 0.4, topSpeedMPerS: 2.5, restitution: 0.4, group: null }]);
    }
  });
});

describe("every problem at once, with row, column and reason", () => {
  it("names a non-numeric value, a unit out of range and a duplicate name with their rows", () => {
    const file = [HEADER, "crate,3,0.4,2.5,0.4,cargo", "coin,heavy,0.25,3,0.6,loot", "barrel,5,0.45,2,1.7,cargo", "Crate,1,0.2,2,0.5,", ""].join("\n");
    const parsed = parseCatalogueFile(encode(file), "bad.csv");
    expect(parsed.objects).toBeNull();
    expect(parsed.problems.map((p) => [p.row, p.column])).toEqual([
      [3, "mass_kg"],
      [4, "restitution"],
      [5, "name"],
    ]);
    expect(parsed.problems[0].reason).toMatch(/not a number: "heavy"/);
    expect(parsed.problems[1].reason).toMatch(/out of range: restitution must be > 0 and ≤ 1; got 1.7/);
    expect(parsed.problems[2].reason).toMatch(/duplicate name "Crate": row 2 already uses it/);
    // The table keeps every row as text, so the form can show and fix it.
    expect(parsed.table[1].mass_kg).toBe("heavy");
  });

  it("names a missing column in the header and still checks the rows", () => {
    const parsed = parseCatalogueFile(encode("name,mass_kg,radius_m,restitution\ncrate,3,0.4,0.4\n"), "c.csv");
    expect(parsed.problems.map(describeProblem)).toContain("Row 1, top_speed_m_per_s: missing column top_speed_m_per_s (fastest it moves in the game, in m/s)");
    expect(parsed.objects).toBeNull();
  });

  it("names missing values, negative masses and unknown columns", () => {
    const parsed = parseCatalogueFile(encode("name,mass_kg,radius_m,top_speed_m_per_s,restitution,colour\ncrate,-3,,2,0.5,red\n"), "c.csv");
    const text = parsed.problems.map(describeProblem);
    expect(text).toContain('Row 1, colour: unknown column "colour"; the columns are name, mass_kg, radius_m, top_speed_m_per_s, restitution, group, friction, rolling_resistance');
    expect(text.some((t) => t.startsWith("Row 2, mass_kg: out of range: mass must be > 0"))).toBe(true);
    expect(text).toContain("Row 2, radius_m: missing value: radius of its collision disc in m");
  });

  it("accepts the table once the values are fixed", () => {
    const parsed = parseCatalogueFile(encode([HEADER, "coin,heavy,0.25,3,0.6,loot"].join("\n")), "c.csv");
    const fixed = parsed.table.map((row) => ({ ...row, mass_kg: "0.6" }));
    const checked = validateTable(fixed);
    expect(checked.problems).toEqual([]);
    // The fixed table saves as a CSV that reads back to the same objects.
    expect(parseCatalogueFile(encode(tableToCsv(fixed)), "c.csv").objects).toEqual(checked.objects);
  });
});

describe("limits, stated in the message", () => {
  it("refuses a file over the byte limit", () => {
    const bytes = new Uint8Array(CATALOGUE_LIMITS.maxFileBytes + 1).fill(0x61);
    const parsed = parseCatalogueFile(bytes, "big.csv");
    expect(parsed.problems[0].reason).toBe("the file is 262,145 bytes; the limit is 262,144 bytes (256 KiB)");
  });

  it("refuses more rows than the object limit (CSV and JSON)", () => {
    const rows = Array.from({ length: CATALOGUE_LIMITS.maxRows + 1 }, (_, i) => `piece ${i},1,0.1,1,0.5,`);
    const parsed = parseCatalogueFile(encode([HEADER, ...rows].join("\n")), "many.csv");
    expect(parsed.problems.map((p) => p.reason)).toContain("the file lists 65 objects; the limit is 64 object types per catalogue");
    const json = JSON.stringify(Array.from({ length: 65 }, (_, i) => ({ name: `p${i}`, mass_kg: 1, radius_m: 0.1, top_speed_m_per_s: 1, restitution: 0.5 })));
    expect(parseCatalogueFile(encode(json), "many.json").problems[0].reason).toBe("the file lists 65 objects; the limit is 64 object types per catalogue");
  });
});

describe("files as spreadsheets write them", () => {
  it("skips a UTF-8 byte-order mark and says so", () => {
    const bytes = new Uint8Array([0xef, 0xbb, 0xbf, ...encode(CRATESLIDE_CATALOGUE_CSV)]);
    const parsed = parseCatalogueFile(bytes, "bom.csv");
    expect(parsed.problems).toEqual([]);
    expect(parsed.objects?.[0].name).toBe("crate");
    expect(parsed.notes).toContain("The file starts with a UTF-8 byte-order mark; it was skipped.");
  });

  it("reads semicolon separators and names a decimal comma", () => {
    const ok = parseCatalogueFile(encode("name;mass_kg;radius_m;top_speed_m_per_s;restitution\ncrate;3;0.4;2.5;0.4\n"), "semi.csv");
    expect(ok.delimiter).toBe(";");
    expect(ok.objects?.[0].massKg).toBe(3);
    expect(ok.notes).toContain("The file uses semicolons between columns; it was read as such.");
    const comma = parseCatalogueFile(encode("name;mass_kg;radius_m;top_speed_m_per_s;restitution\ncrate;3,5;0.4;2.5;0.4\n"), "semi.csv");
    expect(comma.problems.map(describeProblem)).toEqual(['Row 2, mass_kg: "3,5" uses a decimal comma; write it with a point (3.5)']);
  });

  it("refuses Latin-1 and UTF-16 with the reason and what to do", () => {
    // "crâte" in Latin-1: â is the single byte 0xE2, which is not valid UTF-8 here.
    const latin1 = new Uint8Array([...encode(`${HEADER}\ncr`), 0xe2, ...encode("te,3,0.4,2.5,0.4,\n")]);
    const parsed = parseCatalogueFile(latin1, "latin1.csv");
    expect(parsed.problems).toHaveLength(1);
    expect(parsed.problems[0].reason).toMatch(/^the file is not UTF-8 text \(byte 61, on line 2, is 0xe2; Latin-1 or Windows-1252 perhaps\); save it as UTF-8/);
    const utf16 = new Uint8Array([0xff, 0xfe, 0x6e, 0x00]);
    expect(parseCatalogueFile(utf16, "u16.csv").problems[0].reason).toMatch(/UTF-16 text; save it as UTF-8/);
  });

  it("keeps a formula-like name as text with a note (exports guard it)", () => {
    const parsed = parseCatalogueFile(encode([HEADER, "=cmd|' /C calc'!A0,1,0.2,2,0.5,", "crate,3,0.4,2.5,0.4,"].join("\n")), "f.csv");
    expect(parsed.problems).toEqual([]);
    expect(parsed.objects?.[0].name).toBe("=cmd|' /C calc'!A0");
    expect(parsed.notes[0]).toMatch(/^Row 2, name: "=cmd\|' \/C calc'!A0" starts like a spreadsheet formula; it is kept as text/);
  });
});
