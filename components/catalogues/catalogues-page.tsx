"use client";
import { CRATESLIDE_CATALOGUE_CSV } from "@/lib/catalogues/demo";
/**
 * The studio's catalogues: every version by name, and (for engineers and owners) the upload: a
 * file input with drag and drop, every problem of the file at once with its row and column, and an
 * editable table to fix the values before anything is saved.
 */
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useQueryClient } from "@tanstack/react-query";
import { useMemo } from "react";
import { Alert } from "@/components/ui";
import { FileProblems, UploadCard, useUploadCard } from "@/components/uploads/file-upload";
import { UploadsPage, type UploadsListKind } from "@/components/uploads/uploads-page";
import {
  CATALOGUE_COLUMNS,
  CATALOGUE_LIMITS,
  COLUMN_HELP,
  describeProblem,
  parseCatalogueFile,
  tableToCsv,
  validateTable,
  type CatalogueProblem,
  type CatalogueTable,
} from "@/lib/catalogues/format";
import type { StudioRole } from "@/lib/ui/types";
import { catalogueKeys, cataloguesPath, uploadCatalogue, type CatalogueDetail, type CatalogueSummary } from "./catalogue-api";

const th = "px-3 py-2 text-left text-xs font-semibold uppercase tracking-wider text-ink-muted";
const td = "px-3 py-2 align-middle";

interface Loaded {
  fileName: string;
  bytes: Uint8Array;
  /** The file could not be read as a table (encoding, size, JSON syntax): only problems. */
  readable: boolean;
  format: "csv" | "json";
  firstRow: number;
  table: CatalogueTable;
  /** The table as loaded, to tell whether the user changed it. */
  original: string;
  /** Problems of the file itself (size, encoding, syntax, row count): only another file fixes them. */
  fileProblems: CatalogueProblem[];
  /** Problems of the CSV header (unknown or missing columns): gone once the table is edited, as it is then saved with the standard header. */
  headerProblems: CatalogueProblem[];
  notes: string[];
}

function load(fileName: string, bytes: Uint8Array): Loaded {
  const parsed = parseCatalogueFile(bytes, fileName);
  const fileProblems = parsed.problems.filter((problem) => problem.row === null);
  const headerProblems = parsed.problems.filter((problem) => parsed.format === "csv" && problem.row === 1);
  return {
    fileName,
    bytes,
    readable: parsed.table.length > 0,
    format: parsed.format,
    firstRow: parsed.firstRow,
    table: parsed.table,
    original: JSON.stringify(parsed.table),
    fileProblems,
    headerProblems,
    notes: parsed.notes,
  };
}

export function CataloguesPage({ studioId, studioName, role, initialCatalogues }: { studioId: string; studioName: string; role: StudioRole; initialCatalogues?: CatalogueSummary[] }) {
  const kind: UploadsListKind<CatalogueSummary> = {
    title: "Catalogues",
    nameHeader: "Catalogue",
    loadingLabel: "catalogues",
    empty: { writer: "No catalogues yet. Upload one row per object type of your game above.", reader: "No catalogues yet." },
    tableTestId: "catalogues-table",
    queryKey: catalogueKeys.list(studioId),
    path: cataloguesPath(studioId),
    field: "catalogues",
    name: (catalogue) => (
      <Link href={`/studios/${studioId}/catalogues/${catalogue.id}`} className="text-action hover:underline">
        {catalogue.name}
      </Link>
    ),
    columns: [
      { key: "objects", header: "Objects", cell: (catalogue) => catalogue.objectCount },
      { key: "file", header: "File", cell: (catalogue) => catalogue.fileName, className: "font-mono text-xs" },
    ],
  };
  return <UploadsPage kind={kind} studioId={studioId} studioName={studioName} role={role} initial={initialCatalogues} upload={<CatalogueUpload studioId={studioId} />} />;
}

function CatalogueUpload({ studioId }: { studioId: string }) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const card = useUploadCard<Loaded>();
  const { loaded, setLoaded, name, setName, saving, setServerError } = card;

  const checked = useMemo(() => (loaded && loaded.readable ? validateTable(loaded.table, loaded.firstRow) : null), [loaded]);
  const edited = loaded !== null && JSON.stringify(loaded.table) !== loaded.original;
  const problems: CatalogueProblem[] = loaded ? [...loaded.fileProblems, ...(edited ? [] : loaded.headerProblems), ...(checked?.problems ?? [])] : [];
  const invalid = new Set(problems.filter((p) => p.row !== null && p.column).map((p) => `${p.row}:${p.column}`));
  const canSave = loaded !== null && loaded.readable && problems.length === 0 && !saving;

  async function take(file: File) {
    setServerError(null);
    const bytes = new Uint8Array(await file.arrayBuffer());
    setLoaded(load(file.name, bytes));
    if (!name) setName(file.name.replace(/\.[^.]*$/, ""));
  }

  function setCell(rowIndex: number, column: (typeof CATALOGUE_COLUMNS)[number], value: string) {
    setLoaded((current) => {
      if (!current) return current;
      const table = current.table.map((row, i) => (i === rowIndex ? { ...row, [column]: value } : row));
      // Header problems stay; the fixed table is saved as a CSV with the standard header.
      return { ...current, table };
    });
  }

  const save = () =>
    card.save(async (loaded) => {
      // An untouched valid file is saved byte for byte; a table fixed here is saved as the CSV it now is.
      const fileName = edited ? loaded.fileName.replace(/\.[^.]*$/, "") + ".csv" : loaded.fileName;
      const uploaded = new Blob([loaded.bytes as BlobPart], { type: loaded.format === "json" ? "application/json" : "text/csv" });
      const blob = edited ? new Blob([tableToCsv(loaded.table)], { type: "text/csv" }) : uploaded;
      // A corrected table keeps the file it was corrected from: "Download original file" answers those bytes.
      const result = await uploadCatalogue<{ catalogue: CatalogueDetail }>(studioId, blob, fileName, name, edited ? { file: uploaded, fileName: loaded.fileName } : undefined);
      await queryClient.invalidateQueries({ queryKey: catalogueKeys.list(studioId) });
      router.push(`/studios/${studioId}/catalogues/${result.catalogue.id}`);
      return "leaving";
    });

  return (
    <UploadCard
      card={card}
      kind={{
        noun: "catalogue",
        sample: { href: `data:text/csv;charset=utf-8,${encodeURIComponent(CRATESLIDE_CATALOGUE_CSV)}`, fileName: "sample-catalogue-crateslide.csv", format: "CSV" },
        dropLabel: "Drop a file here, or choose one",
        accept: ".csv,.json,text/csv,application/json",
        maxNameLength: CATALOGUE_LIMITS.maxCatalogueNameLength,
      }}
      intro={
        <>
          One row per object type, as CSV (comma, semicolon or tab separated, UTF-8) or JSON, with the columns{" "}
          {CATALOGUE_COLUMNS.map((column, i) => (
            <span key={column}>
              <code className="font-mono text-xs">{column}</code>
              {i < CATALOGUE_COLUMNS.length - 1 ? ", " : ""}
            </span>
          ))}
          . At most {CATALOGUE_LIMITS.maxRows} objects and {CATALOGUE_LIMITS.maxFileBytes / 1024} KiB. Nothing is saved until every row is valid.
        </>
      }
      onFile={(file) => void take(file)}
      canSave={canSave}
      onSave={() => void save()}
    >
      {loaded ? (
        <>
          {problems.length > 0 ? (
            <FileProblems
              problems={problems}
              fileName={loaded.fileName}
              fixWhere={`${loaded.readable ? "in the table below" : "in the file"} before saving`}
              testId="catalogue-problems"
              itemTestId="catalogue-problem"
              renderProblem={describeProblem}
            />
          ) : loaded.readable ? (
            <Alert tone="ok">
              {loaded.table.length} objects, every row valid{edited ? " (fixed here; saved as CSV)" : ""}.
            </Alert>
          ) : null}
          {loaded.notes.length > 0 ? (
            <ul className="space-y-1 text-sm text-ink-muted" data-testid="catalogue-notes">
              {loaded.notes.map((note, i) => (
                <li key={i}>{note}</li>
              ))}
            </ul>
          ) : null}
          {loaded.readable ? (
            <div className="overflow-x-auto">
              <table className="w-full text-sm" data-testid="catalogue-edit-table">
                <caption className="sr-only">Objects of the file; every cell can be edited</caption>
                <thead className="border-b border-line">
                  <tr>
                    <th scope="col" className={th}>Row</th>
                    {CATALOGUE_COLUMNS.map((column) => (
                      <th key={column} scope="col" className={th} title={COLUMN_HELP[column]}>
                        {column}
                      </th>
                    ))}
                  </tr>
                </thead>
                <tbody className="divide-y divide-line">
                  {loaded.table.map((row, i) => {
                    const rowNumber = loaded.firstRow + i;
                    return (
                      <tr key={i}>
                        <th scope="row" className={`${td} font-mono text-xs text-ink-muted`}>
                          {rowNumber}
                        </th>
                        {CATALOGUE_COLUMNS.map((column) => (
                          <td key={column} className="px-1 py-1">
                            <input
                              aria-label={`Row ${rowNumber}, ${column}`}
                              aria-invalid={invalid.has(`${rowNumber}:${column}`) || undefined}
                              value={row[column]}
                              onChange={(event) => setCell(i, column, event.target.value)}
                              className="w-full min-w-20 rounded border border-line bg-surface px-2 py-1 font-mono text-xs aria-[invalid=true]:border-danger aria-[invalid=true]:bg-danger-soft"
                            />
                          </td>
                        ))}
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </div>
          ) : null}
        </>
      ) : null}
    </UploadCard>
  );
}
