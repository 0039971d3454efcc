"use client";
/** Client access to the catalogue routes (`/api/v1/studios/{studioId}/catalogues/…`); types are imported type-only from the server modules. */
import { ApiClientError } from "@/lib/ui/api";
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

/** Uploads a file as multipart/form-data; errors come back as ApiClientError with the API's issues. */
export async function uploadCatalogue<T>(studioId: string, file: Blob, fileName: string, name: string): Promise<T> {
  const form = new FormData();
  form.set("file", file, fileName);
  if (name.trim()) form.set("name", name.trim());
  const response = await fetch(cataloguesPath(studioId), { method: "POST", body: form, credentials: "same-origin", cache: "no-store", headers: { accept: "application/json" } });
  const text = await response.text();
  let parsed: unknown;
  try {
    parsed = text ? JSON.parse(text) : undefined;
  } catch {
    parsed = undefined;
  }
  if (!response.ok) {
    const error = ((parsed ?? {}) as { error?: { code?: string; message?: string; field?: string; issues?: { field: string; message: string }[] } }).error ?? {};
    throw new ApiClientError(response.status, error.code ?? `http_${response.status}`, error.message ?? `The server answered ${response.status}.`, error.field, error.issues ?? []);
  }
  return parsed as T;
}
