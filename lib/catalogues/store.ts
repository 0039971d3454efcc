/**
 * Catalogues and their checks in the database, scoped by studio. A catalogue is stored only when
 * its file has no problem; each upload under a name is that name's next version. A check builds
 * its pair sweep and goes through the same quote → submit → queue runner → ledger path as every
 * sweep; its results are read back only through lib/queue/views.ts.
 */
import "server-only";
import { pairContactTuning, type PairContactTuning } from "./contact-tuning";
import { and, desc, eq } from "drizzle-orm";
import type { Db } from "@/db/client";
import { newId } from "@/db/ids";
import { catalogueChecks, catalogues, sweeps, type Catalogue, type CatalogueCheck } from "@/db/schema";
import { ApiError } from "@/lib/errors";
import { quoteSweep, submitSweep, type Quote } from "@/lib/queue/submit";
import { storedCells, sweepView, type SweepView } from "@/lib/queue/views";
import { INSTABILITY_VERDICTS } from "@/lib/physics/types";
import { canonicalJson } from "@/lib/sweeps/canonical";
import { fileOf, storedBytes, versionedUploads, versionSummary, type VersionSummary } from "@/lib/uploads/versioned";
import { CheckInputError, checkSettingsSchema, checkSpec, pairMatrix, recommend, type CheckSettings, type PairMatrix, type Recommendation } from "./check";
import { CATALOGUE_LIMITS, describeProblem, parseCatalogueFile, type CatalogueObject, type CatalogueProblem } from "./format";

export { contentHash } from "@/lib/uploads/versioned";

/** Catalogues as versioned uploads (lib/uploads/versioned.ts). */
export const catalogueUploads = versionedUploads({
  table: catalogues,
  uniqueIndex: "catalogues_studio_name_version_uq",
  idPrefix: "cat",
  noun: "catalogue",
  problemsCode: "invalid_catalogue",
  fallbackFileName: "catalogue",
  maxFileBytes: CATALOGUE_LIMITS.maxFileBytes,
  maxFileText: "256 KiB",
  maxNameLength: CATALOGUE_LIMITS.maxCatalogueNameLength,
  nameMissing: "a catalogue needs a name (or a file name to take it from).",
});

function problemField(problem: CatalogueProblem): string {
  return ["file", problem.row !== null ? `row ${problem.row}` : null, problem.column].filter(Boolean).join(".");
}

/** Every problem of a file as one 422, each issue naming its row and column. */
export function catalogueProblemsError(problems: readonly CatalogueProblem[]): ApiError {
  return catalogueUploads.problemsError(problems, problemField, describeProblem);
}

export interface CatalogueUpload {
  name?: string;
  fileName: string;
  mediaType: string;
  bytes: Uint8Array;
  /** The file as the user chose it, when `bytes` is a table corrected from it before saving. */
  original?: { fileName: string; bytes: Uint8Array } | null;
  createdByUserId: string | null;
}

export interface CatalogueSummary extends VersionSummary {
  format: "csv" | "json";
  objectCount: number;
  /** The uploaded file when the saved one is a table corrected from it (GET …/file answers it; ?copy=saved the corrected one). */
  original: { fileName: string; fileBytes: number; contentHash: string } | null;
}

export interface CatalogueDetail extends CatalogueSummary {
  objects: CatalogueObject[];
  notes: string[];
  /** Every version of the same name, newest first. */
  versions: CatalogueSummary[];
}

export function catalogueSummary(row: Catalogue): CatalogueSummary {
  return {
    ...versionSummary(row),
    format: row.format,
    objectCount: row.objectCount,
    original:
      row.originalFileBase64 !== null && row.originalFileName !== null && row.originalFileBytes !== null && row.originalContentHash !== null
        ? { fileName: row.originalFileName, fileBytes: row.originalFileBytes, contentHash: row.originalContentHash }
        : null,
  };
}

/** Parses, checks and stores a catalogue file as the next version of its name; nothing is stored on any problem. */
export async function saveCatalogue(db: Db, studioId: string, upload: CatalogueUpload): Promise<{ catalogue: Catalogue; notes: string[] }> {
  const name = catalogueUploads.nameOf(upload.name, upload.fileName);
  catalogueUploads.checkSize(upload.bytes);
  const parsed = parseCatalogueFile(upload.bytes, upload.fileName);
  if (!parsed.objects) throw catalogueProblemsError(parsed.problems);
  const objects = parsed.objects;
  const file = catalogueUploads.file(upload.bytes, upload.fileName);
  if (upload.original) catalogueUploads.checkSize(upload.original.bytes, "original");
  const original = upload.original ? catalogueUploads.file(upload.original.bytes, upload.original.fileName) : null;
  const catalogue = await catalogueUploads.insert(db, studioId, name, {
    ...file,
    mediaType: parsed.format === "json" ? "application/json" : "text/csv",
    format: parsed.format,
    objects,
    objectCount: objects.length,
    ...(original
      ? { originalFileName: original.fileName, originalFileBase64: original.fileBase64, originalFileBytes: original.fileBytes, originalContentHash: original.contentHash }
      : {}),
    createdByUserId: upload.createdByUserId,
  });
  return { catalogue, notes: parsed.notes };
}

export async function listCatalogues(db: Db, studioId: string): Promise<CatalogueSummary[]> {
  return (await catalogueUploads.list(db, studioId)).map(catalogueSummary);
}

export function catalogueOfStudio(db: Db, studioId: string, catalogueId: string): Promise<Catalogue> {
  return catalogueUploads.ofStudio(db, studioId, catalogueId);
}

export async function catalogueDetail(db: Db, row: Catalogue): Promise<CatalogueDetail> {
  const versions = await catalogueUploads.versionsOf(db, row);
  return { ...catalogueSummary(row), objects: row.objects, notes: [], versions: versions.map(catalogueSummary) };
}

/** The file as the user uploaded it: the original when the table was corrected before saving, else the saved file (lib/uploads/versioned.ts fileOf). */
export function catalogueUploadedFile(row: Catalogue): { fileName: string; bytes: Uint8Array; contentHash: string } {
  if (row.originalFileBase64 !== null && row.originalFileName !== null && row.originalContentHash !== null) {
    return { fileName: row.originalFileName, bytes: storedBytes(row.originalFileBase64), contentHash: row.originalContentHash };
  }
  return fileOf(row);
}

// ---------------------------------------------------------------------------
// Checks

export function parseSettingsOrThrow(input: unknown): CheckSettings {
  if (input === undefined) throw new ApiError("invalid_settings", "settings: the game's settings are required (dtS, substeps, integrator, stiffness …).", "settings");
  const parsed = checkSettingsSchema.safeParse(input);
  if (parsed.success) return parsed.data;
  const issues = parsed.error.issues.map((issue) => {
    const field = ["settings", ...issue.path.map(String), ...(issue.code === "unrecognized_keys" ? [issue.keys[0]] : [])].join(".");
    return { field, message: issue.code === "unrecognized_keys" ? `unknown field "${issue.keys.join(", ")}"` : issue.message };
  });
  return (() => {
    throw new ApiError("invalid_settings", `${issues[0].field}: ${issues[0].message}`, issues[0].field, issues);
  })();
}

/** The sweep spec of a check, with input problems as 400s naming the settings field. */
export function specOfCheck(catalogue: Catalogue, settings: CheckSettings) {
  try {
    return checkSpec(catalogue.name, catalogue.version, catalogue.objects, settings);
  } catch (error) {
    if (error instanceof CheckInputError) throw new ApiError("invalid_settings", `settings.${error.field}: ${error.message}`, `settings.${error.field}`);
    throw error;
  }
}

export async function quoteCheck(db: Db, studioId: string, catalogue: Catalogue, settingsInput: unknown): Promise<{ quote: Quote; settings: CheckSettings; cells: number }> {
  const settings = parseSettingsOrThrow(settingsInput);
  const spec = specOfCheck(catalogue, settings);
  const quote = await quoteSweep(db, studioId, spec);
  return { quote, settings, cells: quote.cells };
}

export async function submitCheck(
  db: Db,
  studioId: string,
  catalogue: Catalogue,
  input: { settings: unknown; acceptedQuoteMs?: number; createdByUserId: string | null },
): Promise<CatalogueCheck> {
  const settings = parseSettingsOrThrow(input.settings);
  const spec = specOfCheck(catalogue, settings);
  const sweep = await submitSweep(db, studioId, { spec, createdByUserId: input.createdByUserId, acceptedQuoteMs: input.acceptedQuoteMs });
  const [check] = await db
    .insert(catalogueChecks)
    .values({ id: newId("chk"), studioId, catalogueId: catalogue.id, sweepId: sweep.id, settings, createdByUserId: input.createdByUserId })
    .returning();
  return check;
}

export async function checkOfCatalogue(db: Db, catalogue: Catalogue, checkId: string): Promise<CatalogueCheck> {
  const [row] = await db
    .select()
    .from(catalogueChecks)
    .where(and(eq(catalogueChecks.id, checkId), eq(catalogueChecks.catalogueId, catalogue.id), eq(catalogueChecks.studioId, catalogue.studioId)));
  if (!row) throw new ApiError("not_found", "Catalogue check not found.");
  return row;
}

export interface CheckSummary {
  id: string;
  catalogueId: string;
  createdAt: string;
  settings: CheckSettings;
  sweepId: string;
  status: string;
  cells: number;
  cellsDone: number;
}

export async function listChecks(db: Db, catalogue: Catalogue): Promise<CheckSummary[]> {
  const rows = await db
    .select({ check: catalogueChecks, sweep: sweeps })
    .from(catalogueChecks)
    .innerJoin(sweeps, eq(sweeps.id, catalogueChecks.sweepId))
    .where(and(eq(catalogueChecks.catalogueId, catalogue.id), eq(catalogueChecks.studioId, catalogue.studioId)))
    .orderBy(desc(catalogueChecks.createdAt), desc(catalogueChecks.id));
  return rows.map(({ check, sweep }) => ({
    id: check.id,
    catalogueId: check.catalogueId,
    createdAt: check.createdAt.toISOString(),
    settings: check.settings,
    sweepId: sweep.id,
    status: sweep.status,
    cells: sweep.cells,
    cellsDone: sweep.cellsDone,
  }));
}

export interface Confirmation {
  /** The settings a confirming check runs with: the game's, at the recommended stiffness. */
  settings: CheckSettings;
  /** The latest check of this catalogue with exactly those settings, if any. */
  checkId: string | null;
  status: "not-run" | "running" | "confirmed" | "refuted";
  /**
   * Pairs that failed at the recommended stiffness the way the recommendation is about: blown up,
   * past the step bound, tunnelled or sunk too deep (when refuted).
   */
  pairsAtRisk: string[];
  /**
   * Pairs that held but were not accurate there (rebound off the target, energy gained, contact in
   * too few steps): the stiffness is stable, and these pairs say what a finer step would add.
   */
  pairsOffTarget: string[];
}

/** Verdicts that refute a stiffness recommended from the stability bound (the others are about accuracy). */
const REFUTING_VERDICTS: ReadonlySet<string> = new Set(INSTABILITY_VERDICTS);

export interface CheckView {
  id: string;
  catalogue: CatalogueSummary;
  objects: CatalogueObject[];
  settings: CheckSettings;
  sweep: SweepView;
  matrix: PairMatrix;
  recommendation: Recommendation;
  /** Each pairing's contact as natural frequency and damping ratio (lib/catalogues/contact-tuning.ts). */
  contacts: PairContactTuning[];
  confirmation: Confirmation | null;
}

/** The settings of a check confirming the advised single stiffness (and substeps, when the advice raises them). */
export function confirmationSettings(settings: CheckSettings, recommendation: Recommendation): CheckSettings | null {
  const advised = recommendation.advice.settings;
  if (advised === null) return null;
  const { groupStiffness: _ignored, ...rest } = settings;
  void _ignored;
  return { ...rest, substeps: advised.substeps, stiffness: advised.stiffness };
}

export async function checkView(db: Db, catalogue: Catalogue, check: CatalogueCheck): Promise<CheckView> {
  const [sweep] = await db.select().from(sweeps).where(eq(sweeps.id, check.sweepId));
  const objects = catalogue.objects;
  const settings = checkSettingsSchema.parse(check.settings);
  const cells = await storedCells(db, sweep);
  const recommendation = recommend(objects, settings);
  const wanted = confirmationSettings(settings, recommendation);
  let confirmation: Confirmation | null = null;
  if (wanted) {
    confirmation = { settings: wanted, checkId: null, status: "not-run", pairsAtRisk: [], pairsOffTarget: [] };
    const key = canonicalJson(wanted);
    for (const other of await listChecks(db, catalogue)) {
      if (canonicalJson(checkSettingsSchema.parse(other.settings)) !== key) continue;
      confirmation.checkId = other.id;
      if (other.status !== "done") {
        confirmation.status = "running";
      } else {
        const [otherSweep] = await db.select().from(sweeps).where(eq(sweeps.id, other.sweepId));
        const matrix = pairMatrix(objects, wanted, await storedCells(db, otherSweep));
        const worstOf = new Map(matrix.pairs.map((pair) => [pair.name, pair.worstVerdict]));
        confirmation.pairsAtRisk = matrix.atRisk.filter((name) => REFUTING_VERDICTS.has(String(worstOf.get(name))));
        confirmation.pairsOffTarget = matrix.atRisk.filter((name) => !REFUTING_VERDICTS.has(String(worstOf.get(name))));
        confirmation.status = matrix.complete && confirmation.pairsAtRisk.length === 0 ? "confirmed" : "refuted";
      }
      break;
    }
  }
  return {
    id: check.id,
    catalogue: catalogueSummary(catalogue),
    objects,
    settings,
    sweep: await sweepView(db, sweep),
    matrix: pairMatrix(objects, settings, cells),
    recommendation,
    contacts: pairContactTuning(objects, settings, recommendation),
    confirmation,
  };
}
