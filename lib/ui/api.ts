/**
 * Client-side access to the Kickdrift JSON API (`/api/v1/*`). Every failure becomes an ApiClientError
 * carrying the API's `{ error: { code, message, field? }, issues? }` so forms can place messages beside fields.
 */
export type ApiIssue = { field: string; message: string };

export class ApiClientError extends Error {
  readonly status: number;
  readonly code: string;
  readonly field?: string;
  readonly issues: ApiIssue[];

  constructor(status: number, code: string, message: string, field?: string, issues: ApiIssue[] = []) {
    super(message);
    this.name = "ApiClientError";
    this.status = status;
    this.code = code;
    this.field = field;
    this.issues = issues;
  }

  /** The message for one form field: the first issue naming it, or the top-level error if it names it. */
  messageFor(field: string): string | undefined {
    const issue = this.issues.find((candidate) => candidate.field === field);
    if (issue) return issue.message;
    return this.field === field ? this.message : undefined;
  }

  /** The message for a list field or anything inside it ("scopes", "scopes.1"): the first issue under it, or the top-level error if it is. */
  messageUnder(field: string): string | undefined {
    const under = (path: string | undefined) => path === field || (path?.startsWith(`${field}.`) ?? false) || (path?.startsWith(`${field}[`) ?? false);
    return this.issues.find((issue) => under(issue.field))?.message ?? (under(this.field) ? this.message : undefined);
  }
}

type ErrorBody = {
  error?: { code?: unknown; message?: unknown; field?: unknown; issues?: unknown };
  issues?: unknown;
};

function readIssues(raw: unknown): ApiIssue[] {
  if (!Array.isArray(raw)) return [];
  return raw.flatMap((item) => {
    if (item && typeof item === "object" && "field" in item && "message" in item) {
      const { field, message } = item as { field: unknown; message: unknown };
      if (typeof field === "string" && typeof message === "string") return [{ field, message }];
    }
    return [];
  });
}

export async function apiFetch<T>(path: string, init: { method?: string; body?: unknown } = {}): Promise<T> {
  const response = await fetch(path, {
    method: init.method ?? "GET",
    headers: init.body === undefined ? { accept: "application/json" } : { accept: "application/json", "content-type": "application/json" },
    body: init.body === undefined ? undefined : JSON.stringify(init.body),
    credentials: "same-origin",
    cache: "no-store",
  });
  const text = await response.text();
  let parsed: unknown = undefined;
  if (text.length > 0) {
    try {
      parsed = JSON.parse(text);
    } catch {
      parsed = undefined;
    }
  }
  if (!response.ok) {
    const body = (parsed ?? {}) as ErrorBody;
    const error = body.error ?? {};
    const message = typeof error.message === "string" ? error.message : `The server answered ${response.status}.`;
    const code = typeof error.code === "string" ? error.code : `http_${response.status}`;
    const field = typeof error.field === "string" ? error.field : undefined;
    const issues = readIssues(body.issues ?? error.issues);
    throw new ApiClientError(response.status, code, message, field, issues);
  }
  return parsed as T;
}

export function errorMessage(error: unknown): string {
  if (error instanceof ApiClientError) return error.message;
  if (error instanceof Error) return error.message;
  return "Something went wrong. Please try again.";
}

/**
 * POSTs a file as multipart/form-data (field "file", and "name" when not blank) to an upload route;
 * errors come back as ApiClientError with the API's issues.
 */
export async function uploadFile<T>(path: string, file: Blob, fileName: string, name: string, extra: { field: string; file: Blob; fileName: string }[] = []): Promise<T> {
  const form = new FormData();
  form.set("file", file, fileName);
  for (const part of extra) form.set(part.field, part.file, part.fileName);
  if (name.trim()) form.set("name", name.trim());
  const response = await fetch(path, { method: "POST", body: form, credentials: "same-origin", cache: "no-store", headers: { accept: "application/json" } });
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
