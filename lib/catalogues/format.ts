/**
 * Catalogue files: one row per object type of a game (name, mass, radius, top speed, restitution,
 * optional group, optional friction coefficient and rolling resistance), as CSV (parsed with papaparse) or JSON. Every row is checked with zod and every
 * problem is reported at once with its row, column and reason; a file is kept only when it has
 * none. The same code runs in the browser (the upload form and its editable table) and on the
 * server (which checks again before storing).
 *
 * Rows are numbered as a spreadsheet shows them: in a CSV the header is row 1 and the first
 * object is row 2; in JSON the first object is row 1.
 *
 * Pure: safe to import in the browser.
 */
import Papa from "papaparse";
import { z } from "@/lib/zod";
import { guardFormula } from "../csv";
import { formatLimit, numericRule, rangeViolation, type NumericParameter } from "../sweeps/parameters";
import { nameTextProblem } from "@/lib/api/text";

export const CATALOGUE_LIMITS = {
  /** Bytes of one uploaded file. */
  maxFileBytes: 256 * 1024,
  /** Object types in one catalogue (every unordered pair of 64 objects is 2,080 pairs). */
  maxRows: 64,
  /** Characters of an object name or group. */
  maxNameLength: 80,
  /** Characters of a catalogue name. */
  maxCatalogueNameLength: 120,
} as const;

/** The columns of a catalogue, in file order. */
export const CATALOGUE_COLUMNS = ["name", "mass_kg", "radius_m", "top_speed_m_per_s", "restitution", "group", "friction", "rolling_resistance"] as const;
export type CatalogueColumn = (typeof CATALOGUE_COLUMNS)[number];
export const REQUIRED_COLUMNS: readonly CatalogueColumn[] = ["name", "mass_kg", "radius_m", "top_speed_m_per_s", "restitution"];

/** What a column means, for the form's help and the docs. */
export const COLUMN_HELP: Record<CatalogueColumn, string> = {
  name: "object type, unique in the file",
  mass_kg: "mass in kg",
  radius_m: "radius of its collision disc in m",
  top_speed_m_per_s: "fastest it moves in the game, in m/s",
  restitution: "coefficient of restitution, > 0 and ≤ 1",
  group: "optional: a group name (for per-group stiffness)",
  friction: "optional: Coulomb friction coefficient μ, ≥ 0 (empty: frictionless)",
  rolling_resistance: "optional: rolling resistance coefficient μ_r, ≥ 0 (empty: none)",
};

export interface CatalogueObject {
  name: string;
  massKg: number;
  radiusM: number;
  topSpeedMPerS: number;
  restitution: number;
  group: string | null;
  /**
   * Coulomb friction coefficient μ of the object's contacts; absent or null: frictionless.
   * Catalogues saved before friction existed carry neither field (read them as null).
   */
  friction?: number | null;
  /** Rolling resistance coefficient μ_r (Ai, Chen, Rotter & Ooi 2011); absent or null: none. */
  rollingResistance?: number | null;
}

export interface CatalogueProblem {
  /** Row as a spreadsheet numbers it (CSV header = 1); null for the whole file or the header. */
  row: number | null;
  /** The column concerned, or null for the whole file. */
  column: CatalogueColumn | string | null;
  reason: string;
}

/** The file's rows as text, one record per object, keyed by column: what the editable table edits. */
export type CatalogueTable = Record<CatalogueColumn, string>[];

export interface ParsedCatalogue {
  format: "csv" | "json";
  /** "," ";" or "\t" for CSV. */
  delimiter: string | null;
  /** Number of the first object's row (2 for CSV, 1 for JSON). */
  firstRow: number;
  table: CatalogueTable;
  problems: CatalogueProblem[];
  /** Kept as they are but worth knowing (a byte-order mark, semicolons, formula-like text). */
  notes: string[];
  /** The objects, when there are no problems. */
  objects: CatalogueObject[] | null;
}

// ---------------------------------------------------------------------------
// Header names

/** "Mass (kg)", "mass_kg", "massKg" and "MASS KG" all name mass_kg. */
function headerKey(header: string): string {
  return header.toLowerCase().replace(/[^a-z0-9]/g, "");
}

const HEADER_ALIASES: Record<string, CatalogueColumn> = {
  name: "name",
  masskg: "mass_kg",
  mass: "mass_kg",
  radiusm: "radius_m",
  radius: "radius_m",
  topspeedmpers: "top_speed_m_per_s",
  topspeedms: "top_speed_m_per_s",
  topspeedmps: "top_speed_m_per_s",
  topspeed: "top_speed_m_per_s",
  restitution: "restitution",
  group: "group",
  friction: "friction",
  frictioncoefficient: "friction",
  mu: "friction",
  rollingresistance: "rolling_resistance",
};

export function columnOfHeader(header: string): CatalogueColumn | null {
  const key = headerKey(header);
  // Own properties only: a header named "constructor" or "__proto__" is not a column.
  return Object.hasOwn(HEADER_ALIASES, key) ? HEADER_ALIASES[key] : null;
}

// ---------------------------------------------------------------------------
// Row schema

const NUMERIC_RULES: Record<"mass_kg" | "radius_m" | "top_speed_m_per_s" | "restitution" | "friction" | "rolling_resistance", NumericParameter> = {
  mass_kg: { ...numericRule("scene.massAKg", "pair"), label: "mass" },
  radius_m: { ...numericRule("scene.radiusAM", "pair"), label: "radius" },
  top_speed_m_per_s: { ...numericRule("scene.speedAMPerS", "pair"), label: "top speed", min: 0, minInclusive: false },
  restitution: { ...numericRule("contact.damping.restitution", "pair"), label: "restitution" },
  // The same limits as a sweep's contact.friction.coefficient and contact.rollingResistance.
  friction: { ...numericRule("contact.friction.coefficient", "pair"), label: "friction" },
  rolling_resistance: { ...numericRule("contact.rollingResistance", "pair"), label: "rolling resistance" },
};

const DECIMAL_NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

/** A number cell's text as a number within its column's limits, or z.NEVER with the problem added. */
function checkedNumber(column: keyof typeof NUMERIC_RULES, text: string, ctx: z.RefinementCtx): number {
  const rule = NUMERIC_RULES[column];
  if (/^[+-]?\d+,\d+$/.test(text)) {
    ctx.addIssue({ code: "custom", message: `"${text}" uses a decimal comma; write it with a point (${text.replace(",", ".")})` });
    return z.NEVER;
  }
  if (!DECIMAL_NUMBER.test(text)) {
    ctx.addIssue({ code: "custom", message: `not a number: "${text.slice(0, 40)}" (${COLUMN_HELP[column]})` });
    return z.NEVER;
  }
  const value = Number(text);
  const problem = rangeViolation(rule, value);
  if (problem) {
    ctx.addIssue({ code: "custom", message: `out of range: ${problem}` });
    return z.NEVER;
  }
  return value;
}

function numberCell(column: keyof typeof NUMERIC_RULES) {
  return z.string().transform((raw, ctx) => {
    const text = raw.trim().normalize("NFC");
    if (text === "") {
      ctx.addIssue({ code: "custom", message: `missing value: ${COLUMN_HELP[column]}` });
      return z.NEVER;
    }
    return checkedNumber(column, text, ctx);
  });
}

/** An optional number: an empty cell is null (the object does not give it). */
function optionalNumberCell(column: keyof typeof NUMERIC_RULES) {
  return z.string().transform((raw, ctx): number | null => {
    const text = raw.trim().normalize("NFC");
    return text === "" ? null : checkedNumber(column, text, ctx);
  });
}

function textCell(column: "name" | "group", required: boolean) {
  return z.string().transform((raw, ctx): string | null => {
    const text = raw.trim().normalize("NFC");
    if (text === "") {
      if (required) ctx.addIssue({ code: "custom", message: `missing value: ${COLUMN_HELP[column]}` });
      return required ? z.NEVER : null;
    }
    if (text.length > CATALOGUE_LIMITS.maxNameLength) {
      ctx.addIssue({ code: "custom", message: `${text.length} characters; the limit is ${CATALOGUE_LIMITS.maxNameLength}` });
      return z.NEVER;
    }
    const problem = nameTextProblem(text);
    if (problem) {
      ctx.addIssue({ code: "custom", message: problem });
      return z.NEVER;
    }
    if (column === "group" && text === "__proto__") {
      // A JSON object cannot hold this key as data (groupStiffness would silently lose it).
      ctx.addIssue({ code: "custom", message: '"__proto__" is reserved; choose another group name' });
      return z.NEVER;
    }
    return text;
  });
}

/** One row of the table, as text, into one catalogue object. */
export const catalogueRowSchema = z.object({
  name: textCell("name", true),
  mass_kg: numberCell("mass_kg"),
  radius_m: numberCell("radius_m"),
  top_speed_m_per_s: numberCell("top_speed_m_per_s"),
  restitution: numberCell("restitution"),
  group: textCell("group", false),
  friction: optionalNumberCell("friction"),
  rolling_resistance: optionalNumberCell("rolling_resistance"),
});

/** Text a spreadsheet would run as a formula: what the CSV exports' guard (lib/sweeps/results.ts) would change. */
export function looksLikeFormula(text: string): boolean {
  return guardFormula(text) !== text;
}

/**
 * Checks every row of a table: all problems at once, with row and column. Row numbers start at
 * `firstRow`. Formula-like names are kept as text (with a note): exports guard them.
 */
export function validateTable(table: CatalogueTable, firstRow = 2): { problems: CatalogueProblem[]; notes: string[]; objects: CatalogueObject[] | null } {
  const problems: CatalogueProblem[] = [];
  const notes: string[] = [];
  if (table.length === 0) problems.push({ row: null, column: null, reason: "the file lists no objects: add one row per object type" });
  if (table.length > CATALOGUE_LIMITS.maxRows) {
    problems.push({ row: null, column: null, reason: `the file lists ${formatLimit(table.length)} objects; the limit is ${CATALOGUE_LIMITS.maxRows} object types per catalogue` });
    return { problems, notes, objects: null };
  }
  const objects: CatalogueObject[] = [];
  const firstRowOfName = new Map<string, number>();
  table.forEach((cells, i) => {
    const row = firstRow + i;
    const parsed = catalogueRowSchema.safeParse(cells);
    if (!parsed.success) {
      for (const issue of parsed.error.issues) problems.push({ row, column: String(issue.path[0] ?? "") || null, reason: issue.message });
      return;
    }
    const value = parsed.data;
    if (value.name === null) return; // required: a missing name was reported above
    const key = value.name.toLowerCase();
    const earlier = firstRowOfName.get(key);
    if (earlier !== undefined) {
      problems.push({ row, column: "name", reason: `duplicate name "${value.name}": row ${earlier} already uses it (names are compared ignoring case)` });
      return;
    }
    firstRowOfName.set(key, row);
    for (const column of ["name", "group"] as const) {
      const text = value[column];
      if (text !== null && looksLikeFormula(text)) {
        notes.push(`Row ${row}, ${column}: "${text.slice(0, 30)}" starts like a spreadsheet formula; it is kept as text, and CSV exports write it with a leading apostrophe so no spreadsheet runs it.`);
      }
    }
    const object: CatalogueObject = { name: value.name as string, massKg: value.mass_kg, radiusM: value.radius_m, topSpeedMPerS: value.top_speed_m_per_s, restitution: value.restitution, group: value.group };
    // Only rows that give them carry the friction fields: a catalogue without them stores (and checks) exactly as before.
    if (value.friction !== null) object.friction = value.friction;
    if (value.rolling_resistance !== null) object.rollingResistance = value.rolling_resistance;
    objects.push(object);
  });
  problems.sort((a, b) => (a.row ?? 0) - (b.row ?? 0) || CATALOGUE_COLUMNS.indexOf(a.column as CatalogueColumn) - CATALOGUE_COLUMNS.indexOf(b.column as CatalogueColumn));
  return { problems, notes, objects: problems.length === 0 ? objects : null };
}

// ---------------------------------------------------------------------------
// Files

function emptyRow(): Record<CatalogueColumn, string> {
  return { name: "", mass_kg: "", radius_m: "", top_speed_m_per_s: "", restitution: "", group: "", friction: "", rolling_resistance: "" };
}

function failed(format: ParsedCatalogue["format"], problem: CatalogueProblem, notes: string[] = []): ParsedCatalogue {
  return { format, delimiter: null, firstRow: format === "csv" ? 2 : 1, table: [], problems: [problem], notes, objects: null };
}

/** Offset of the first byte that does not continue a well-formed UTF-8 sequence (overlongs and surrogates count as bad). */
export function firstInvalidUtf8Byte(bytes: Uint8Array): number {
  let i = 0;
  while (i < bytes.length) {
    const lead = bytes[i];
    const length = lead < 0x80 ? 1 : lead >= 0xc2 && lead <= 0xdf ? 2 : lead >= 0xe0 && lead <= 0xef ? 3 : lead >= 0xf0 && lead <= 0xf4 ? 4 : 0;
    if (length === 0) return i;
    for (let k = 1; k < length; k++) {
      const next = bytes[i + k];
      let low = 0x80;
      let high = 0xbf;
      if (k === 1 && lead === 0xe0) low = 0xa0;
      if (k === 1 && lead === 0xed) high = 0x9f;
      if (k === 1 && lead === 0xf0) low = 0x90;
      if (k === 1 && lead === 0xf4) high = 0x8f;
      if (next === undefined || next < low || next > high) return i;
    }
    i += length;
  }
  return -1;
}

/** Decodes UTF-8 (a leading byte-order mark is dropped); any other encoding is refused with the reason. */
export function decodeCatalogueBytes(bytes: Uint8Array): { text: string; notes: string[] } | { problem: CatalogueProblem } {
  if (bytes.length > CATALOGUE_LIMITS.maxFileBytes) {
    return { problem: { row: null, column: null, reason: `the file is ${formatLimit(bytes.length)} bytes; the limit is ${formatLimit(CATALOGUE_LIMITS.maxFileBytes)} bytes (256 KiB)` } };
  }
  if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
    return { problem: { row: null, column: null, reason: "the file is UTF-16 text; save it as UTF-8 (in a spreadsheet: CSV UTF-8) and upload it again" } };
  }
  const notes: string[] = [];
  const hasBom = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf;
  if (hasBom) notes.push("The file starts with a UTF-8 byte-order mark; it was skipped.");
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(hasBom ? bytes.subarray(3) : bytes);
  } catch {
    const offset = Math.max(0, firstInvalidUtf8Byte(bytes));
    const line = new TextDecoder("utf-8").decode(bytes.subarray(0, offset)).split("\n").length;
    return {
      problem: {
        row: null,
        column: null,
        reason: `the file is not UTF-8 text (byte ${offset + 1}, on line ${line}, is 0x${bytes[offset].toString(16).padStart(2, "0")}; Latin-1 or Windows-1252 perhaps); save it as UTF-8 and upload it again`,
      },
    };
  }
  if (text.includes("\u0000")) return { problem: { row: null, column: null, reason: "the file holds NUL characters: it is not a text file" } };
  return { text, notes };
}

function isJsonName(fileName: string): boolean {
  return /\.json$/i.test(fileName);
}

function parseCsv(text: string, notes: string[]): ParsedCatalogue {
  const result = Papa.parse<string[]>(text, { skipEmptyLines: "greedy", delimitersToGuess: [",", ";", "\t"] });
  const delimiter = result.meta.delimiter;
  if (delimiter === ";") notes.push("The file uses semicolons between columns; it was read as such.");
  if (delimiter === "\t") notes.push("The file uses tabs between columns; it was read as such.");
  const rows = result.data;
  const problems: CatalogueProblem[] = [];
  for (const error of result.errors) {
    if (error.code === "UndetectableDelimiter") continue; // one column: reported below as missing columns
    problems.push({ row: error.row === undefined ? null : error.row + 1, column: null, reason: `CSV: ${error.message}` });
  }
  if (rows.length === 0) return { ...failed("csv", { row: null, column: null, reason: "the file is empty: the first row must name the columns" }, notes) };
  const header = rows[0];
  const columnAt: (CatalogueColumn | null)[] = [];
  const seen = new Set<CatalogueColumn>();
  header.forEach((name, i) => {
    const column = columnOfHeader(name);
    if (column === null) {
      problems.push({ row: 1, column: name.trim() || `column ${i + 1}`, reason: `unknown column "${name.trim()}"; the columns are ${CATALOGUE_COLUMNS.join(", ")}` });
    } else if (seen.has(column)) {
      problems.push({ row: 1, column, reason: `column ${column} appears twice` });
    }
    columnAt.push(column !== null && !seen.has(column) ? column : null);
    if (column) seen.add(column);
  });
  for (const column of REQUIRED_COLUMNS) {
    if (!seen.has(column)) problems.push({ row: 1, column, reason: `missing column ${column} (${COLUMN_HELP[column]})` });
  }
  const dataRows = rows.slice(1);
  if (dataRows.length > CATALOGUE_LIMITS.maxRows) {
    problems.push({ row: null, column: null, reason: `the file lists ${formatLimit(dataRows.length)} objects; the limit is ${CATALOGUE_LIMITS.maxRows} object types per catalogue` });
    return { format: "csv", delimiter, firstRow: 2, table: [], problems, notes, objects: null };
  }
  const table: CatalogueTable = dataRows.map((cells, r) => {
    const record = emptyRow();
    cells.forEach((cell, i) => {
      const column = columnAt[i];
      if (column) record[column] = cell;
      else if (i >= header.length && cell.trim() !== "") problems.push({ row: r + 2, column: `column ${i + 1}`, reason: `more fields than the header names (${header.length})` });
    });
    return record;
  });
  const checked = validateTable(table, 2);
  // Row problems are worth showing even when the header has problems of its own.
  const all = [...problems, ...checked.problems.filter((p) => !(p.row === null && table.length === 0 && problems.length > 0))];
  return { format: "csv", delimiter, firstRow: 2, table, problems: all, notes: [...notes, ...checked.notes], objects: all.length === 0 ? checked.objects : null };
}

function jsonCell(value: unknown): string {
  if (value === null || value === undefined) return "";
  if (typeof value === "number") return String(value);
  if (typeof value === "string") return value;
  return JSON.stringify(value);
}

function parseJson(text: string, notes: string[]): ParsedCatalogue {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (error) {
    return failed("json", { row: null, column: null, reason: `not valid JSON: ${error instanceof Error ? error.message : String(error)}` }, notes);
  }
  const list = Array.isArray(value) ? value : value && typeof value === "object" && Array.isArray((value as { objects?: unknown }).objects) ? (value as { objects: unknown[] }).objects : null;
  if (!list) return failed("json", { row: null, column: null, reason: 'the JSON must be an array of objects, or { "objects": [ … ] }' }, notes);
  if (list.length > CATALOGUE_LIMITS.maxRows) {
    return failed("json", { row: null, column: null, reason: `the file lists ${formatLimit(list.length)} objects; the limit is ${CATALOGUE_LIMITS.maxRows} object types per catalogue` }, notes);
  }
  const problems: CatalogueProblem[] = [];
  const table: CatalogueTable = list.map((entry, i) => {
    const record = emptyRow();
    if (!entry || typeof entry !== "object" || Array.isArray(entry)) {
      problems.push({ row: i + 1, column: null, reason: "each entry must be an object with name, mass_kg, radius_m, top_speed_m_per_s, restitution and optional group, friction and rolling_resistance" });
      return record;
    }
    for (const [key, cell] of Object.entries(entry as Record<string, unknown>)) {
      const column = columnOfHeader(key);
      if (column === null) problems.push({ row: i + 1, column: key, reason: `unknown field "${key}"; the fields are ${CATALOGUE_COLUMNS.join(", ")}` });
      else if (typeof cell === "boolean" || (cell !== null && typeof cell === "object")) problems.push({ row: i + 1, column, reason: `must be ${column === "name" || column === "group" ? "text" : "a number"}; got ${JSON.stringify(cell).slice(0, 40)}` });
      else record[column] = jsonCell(cell);
    }
    return record;
  });
  const checked = validateTable(table, 1);
  const all = [...problems, ...checked.problems].sort((a, b) => (a.row ?? 0) - (b.row ?? 0));
  return { format: "json", delimiter: null, firstRow: 1, table, problems: all, notes: [...notes, ...checked.notes], objects: all.length === 0 ? checked.objects : null };
}

/** Parses an uploaded file (its bytes and name): JSON when the name ends in .json or the text starts with [ or {, CSV otherwise. */
export function parseCatalogueFile(bytes: Uint8Array, fileName: string): ParsedCatalogue {
  const decoded = decodeCatalogueBytes(bytes);
  const guessJson = isJsonName(fileName);
  if ("problem" in decoded) return failed(guessJson ? "json" : "csv", decoded.problem);
  const trimmed = decoded.text.trimStart();
  if (guessJson || trimmed.startsWith("[") || trimmed.startsWith("{")) return parseJson(decoded.text, decoded.notes);
  return parseCsv(decoded.text, decoded.notes);
}

/** The table as a CSV file (comma-separated, header first, CRLF), for saving a table fixed in the form. */
export function tableToCsv(table: CatalogueTable): string {
  return `${Papa.unparse({ fields: [...CATALOGUE_COLUMNS], data: table.map((row) => CATALOGUE_COLUMNS.map((column) => row[column])) }, { newline: "\r\n" })}\r\n`;
}

/** One problem as a sentence: "Row 4, mass_kg: not a number: "heavy"". */
export function describeProblem(problem: CatalogueProblem): string {
  const where = [problem.row !== null ? `Row ${problem.row}` : null, problem.column].filter(Boolean).join(", ");
  return where ? `${where}: ${problem.reason}` : problem.reason;
}
