"use client";
/** Client access to the catalogue routes (`/api/v1/studios/{studioId}/catalogues/…`); types are imported type-only from the server modules. */
import { uploadFile } from "@/lib/ui/api";
import { studioApiPath } from "@/lib/ui/queries";

export type { CatalogueDetail, CatalogueSummary, CheckSummary, CheckView } from "@/lib/catalogues/store";

export function cataloguesPath(studioId: string): string {
  return `${studioApiPath(studioId)}/catalogues`;
}

export function cataloguePath(studioId: string, catalogueId: string): string {
  return `${cataloguesPath(studioId)}/${encodeURIComponent(catalogueId)}`;
}

export function checkPath(studioId: string, catalogueId: string, checkId: string): string {
  return `${cataloguePath(studioId, catalogueId)}/checks/${encodeURIComponent(checkId)}`;
}

export const catalogueKeys = {
  list: (studioId: string) => ["catalogues", studioId] as const,
  one: (studioId: string, catalogueId: string) => ["catalogues", studioId, catalogueId] as const,
  check: (studioId: string, catalogueId: string, checkId: string) => ["catalogues", studioId, catalogueId, "checks", checkId] as const,
};

/** Uploads a catalogue file as multipart/form-data; errors come back as ApiClientError with the API's issues. */
/** Uploads a catalogue; `original` is the file as chosen when `file` is a table corrected from it. */
export async function uploadCatalogue<T>(studioId: string, file: Blob, fileName: string, name: string, original?: { file: Blob; fileName: string }): Promise<T> {
  return uploadFile<T>(cataloguesPath(studioId), file, fileName, name, original ? [{ field: "original", ...original }] : []);
}
