/**
 * The command-line client's HTTP side: every call goes to the public API under KICKDRIFT_URL with
 * the API token from KICKDRIFT_TOKEN, nothing else. Network failures and 5xx/429 answers are
 * retried with exponential backoff; what is still failing after the retries is a ServiceError
 * (exit 3). A 4xx answer is the caller's input and is never retried: an InputError naming the
 * field (exit 2).
 */

export const EXIT = { stable: 0, atRisk: 1, invalidInput: 2, serviceFailure: 3 } as const;

/** Bad input: the field and the reason, printed as `field: reason` (exit 2). */
export class InputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
    this.name = "InputError";
  }
}

/** The service or the network failed after the retries (exit 3). */
export class ServiceError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ServiceError";
  }
}

export interface RetryPolicy {
  /** Attempts after the first. */
  retries: number;
  /** Delay before the first retry (ms); doubled before each next one, capped at maxDelayMs. */
  baseDelayMs: number;
  maxDelayMs: number;
  /** Per-request time limit (ms). */
  timeoutMs: number;
}

export const DEFAULT_RETRY: RetryPolicy = { retries: 5, baseDelayMs: 500, maxDelayMs: 15_000, timeoutMs: 30_000 };

/** Delay before retry number `attempt` (1-based): base·2^(attempt−1), capped, with up to 20 % jitter so many CI jobs do not retry in step. */
export function backoffMs(policy: RetryPolicy, attempt: number, random: () => number = Math.random): number {
  const raw = Math.min(policy.maxDelayMs, policy.baseDelayMs * 2 ** (attempt - 1));
  return Math.round(raw * (1 + 0.2 * random()));
}

const RETRIED_STATUS = new Set([429, 500, 502, 503, 504]);

interface ApiErrorBody {
  error?: { code?: string; message?: string; field?: string; issues?: { field: string; message: string }[] };
}

export interface RequestOptions {
  json?: unknown;
  form?: FormData;
  /** Field name to report for a 404 (e.g. the sweep id given on the command line). */
  notFoundField?: string;
}

export class ApiClient {
  readonly baseUrl: string;
  constructor(
    baseUrl: string,
    private readonly token: string,
    private readonly retry: RetryPolicy = DEFAULT_RETRY,
    private readonly onRetry: (message: string) => void = () => {},
  ) {
    this.baseUrl = baseUrl.replace(/\/+$/, "");
  }

  /** Reads KICKDRIFT_URL and KICKDRIFT_TOKEN; a missing or malformed one is an InputError naming it. */
  static fromEnv(env: NodeJS.ProcessEnv, retry: RetryPolicy, onRetry?: (message: string) => void): ApiClient {
    const url = env.KICKDRIFT_URL;
    const token = env.KICKDRIFT_TOKEN;
    if (!url) throw new InputError("KICKDRIFT_URL", "set KICKDRIFT_URL to the Kickdrift server, e.g. https://kickdrift.example");
    let parsed: URL;
    try {
      parsed = new URL(url);
    } catch {
      throw new InputError("KICKDRIFT_URL", `not a URL: "${url}"`);
    }
    if (parsed.protocol !== "https:" && parsed.protocol !== "http:") throw new InputError("KICKDRIFT_URL", `must be an http or https URL; got "${url}"`);
    if (!token) throw new InputError("KICKDRIFT_TOKEN", "set KICKDRIFT_TOKEN to an API token of the studio (kd_…; create one under Studio → Tokens)");
    return new ApiClient(parsed.toString(), token, retry, onRetry);
  }

  async json<T>(method: string, path: string, options: RequestOptions = {}): Promise<T> {
    const res = await this.send(method, path, options);
    return (await res.json()) as T;
  }

  async text(path: string, options: RequestOptions = {}): Promise<string> {
    const res = await this.send("GET", path, options);
    return res.text();
  }

  /** One call with the retry policy; answers a 2xx response or throws InputError / ServiceError. */
  async send(method: string, path: string, options: RequestOptions = {}): Promise<Response> {
    const url = `${this.baseUrl}/api/v1${path}`;
    let lastProblem = "";
    for (let attempt = 0; attempt <= this.retry.retries; attempt++) {
      if (attempt > 0) {
        const delay = backoffMs(this.retry, attempt);
        this.onRetry(`${lastProblem}; retry ${attempt} of ${this.retry.retries} in ${delay} ms`);
        await new Promise((resolve) => setTimeout(resolve, delay));
      }
      let res: Response;
      try {
        const headers: Record<string, string> = { authorization: `Bearer ${this.token}`, accept: "application/json, text/csv" };
        let body: string | FormData | undefined;
        if (options.json !== undefined) {
          headers["content-type"] = "application/json";
          body = JSON.stringify(options.json);
        } else if (options.form) {
          body = options.form;
        }
        res = await fetch(url, { method, headers, body, signal: AbortSignal.timeout(this.retry.timeoutMs) });
      } catch (error) {
        lastProblem = `${method} ${path}: ${networkReason(error)}`;
        continue;
      }
      if (res.ok) return res;
      if (RETRIED_STATUS.has(res.status)) {
        lastProblem = `${method} ${path}: HTTP ${res.status}${await errorSuffix(res)}`;
        continue;
      }
      throw await inputErrorOf(res, options);
    }
    throw new ServiceError(`${lastProblem} (gave up after ${this.retry.retries} retries)`);
  }
}

function networkReason(error: unknown): string {
  const cause = (error as { cause?: { code?: string; message?: string } }).cause;
  if (cause?.code) return `${cause.code}${cause.message ? ` (${cause.message})` : ""}`;
  if (error instanceof Error && error.name === "TimeoutError") return "no answer within the time limit";
  return error instanceof Error ? error.message : String(error);
}

async function errorSuffix(res: Response): Promise<string> {
  try {
    const body = (await res.json()) as ApiErrorBody;
    return body.error?.message ? ` (${body.error.message})` : "";
  } catch {
    return "";
  }
}

async function inputErrorOf(res: Response, options: RequestOptions): Promise<InputError> {
  let body: ApiErrorBody = {};
  try {
    body = (await res.json()) as ApiErrorBody;
  } catch {
    // not JSON: the status says enough
  }
  const error = body.error ?? {};
  const message = error.message ?? `HTTP ${res.status}`;
  if (res.status === 401) return new InputError("KICKDRIFT_TOKEN", message);
  if (res.status === 403) return new InputError("KICKDRIFT_TOKEN", `${message} (the token needs the write scope for this command)`);
  if (res.status === 404 && options.notFoundField) return new InputError(options.notFoundField, message);
  const issues = error.issues && error.issues.length > 1 ? `\n${error.issues.map((issue) => `  ${issue.field}: ${issue.message}`).join("\n")}` : "";
  return new InputError(error.field ?? `HTTP ${res.status} ${error.code ?? ""}`.trim(), `${message}${issues}`);
}
