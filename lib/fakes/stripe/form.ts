import "server-only";

/**
 * Stripe's wire format: application/x-www-form-urlencoded with bracketed keys
 * (`metadata[studio_id]=…`, `line_items[0][price]=…`, `expand[]=…`), the same rules for GET query strings.
 * Indexed and empty-bracket segments build arrays; named segments build objects; `+` is a space.
 */

export type FormValue = string | FormValue[] | { [key: string]: FormValue };
export type FormObject = { [key: string]: FormValue };

export class FormParseError extends Error {
  constructor(
    message: string,
    readonly param: string,
  ) {
    super(message);
  }
}

const MAX_DEPTH = 8;

function decodeComponent(raw: string): string {
  const spaced = raw.replace(/\+/g, " ");
  try {
    return decodeURIComponent(spaced);
  } catch {
    return spaced;
  }
}

/** Splits `a[b][0][]` into ["a", "b", "0", ""]. */
export function splitKey(key: string): string[] {
  const open = key.indexOf("[");
  if (open <= 0) return [key];
  const segments = [key.slice(0, open)];
  const rest = key.slice(open);
  const re = /\[([^\]]*)\]/g;
  let consumed = 0;
  for (let m = re.exec(rest); m; m = re.exec(rest)) {
    if (m.index !== consumed) break;
    segments.push(m[1]);
    consumed = m.index + m[0].length;
  }
  if (consumed !== rest.length) {
    // Unbalanced brackets: keep the remainder literally on the last segment, as qs does.
    segments[segments.length - 1] += rest.slice(consumed);
  }
  return segments;
}

/** Parses a form-encoded body or query string into nested objects and arrays. */
export function parseForm(input: string): FormObject {
  const root: Record<string, unknown> = {};
  if (!input) return {};
  for (const pair of input.split("&")) {
    if (!pair) continue;
    const eq = pair.indexOf("=");
    const rawKey = eq === -1 ? pair : pair.slice(0, eq);
    const rawValue = eq === -1 ? "" : pair.slice(eq + 1);
    const key = decodeComponent(rawKey);
    const value = decodeComponent(rawValue);
    const segments = splitKey(key);
    if (segments.length > MAX_DEPTH) {
      throw new FormParseError(`Parameter nesting is too deep (more than ${MAX_DEPTH} levels): ${key}`, key);
    }
    assign(root, segments, value, key);
  }
  return finalize(root) as FormObject;
}

/** Arrays are collected as index→value maps first, so `a[1]` before `a[0]` still yields [a0, a1]. */
const ARRAY_MARK = Symbol("array");
type Sparse = { [ARRAY_MARK]: true; items: Map<number, unknown>; next: number };

function isSparse(v: unknown): v is Sparse {
  return typeof v === "object" && v !== null && ARRAY_MARK in v;
}

function assign(container: Record<string, unknown> | Sparse, segments: string[], value: string, fullKey: string): void {
  const [head, ...rest] = segments;
  const isLast = rest.length === 0;
  if (isSparse(container)) {
    let index: number;
    if (head === "") index = container.next;
    else if (/^\d+$/.test(head)) index = Number(head);
    else throw new FormParseError(`Mixed array and object keys in parameter ${fullKey}`, fullKey);
    if (index > 10_000) throw new FormParseError(`Array index too large in parameter ${fullKey}`, fullKey);
    container.next = Math.max(container.next, index + 1);
    if (isLast) {
      container.items.set(index, value);
      return;
    }
    let child = container.items.get(index);
    if (child === undefined || typeof child === "string") {
      child = makeChild(rest[0]);
      container.items.set(index, child);
    }
    assign(child as Record<string, unknown> | Sparse, rest, value, fullKey);
    return;
  }
  if (head === "__proto__" || head === "constructor" || head === "prototype") {
    throw new FormParseError(`Invalid parameter name: ${fullKey}`, fullKey);
  }
  if (isLast) {
    container[head] = value;
    return;
  }
  let child = container[head];
  if (child === undefined || typeof child === "string") {
    child = makeChild(rest[0]);
    container[head] = child;
  } else if (isSparse(child) !== (rest[0] === "" || /^\d+$/.test(rest[0]))) {
    throw new FormParseError(`Mixed array and object keys in parameter ${fullKey}`, fullKey);
  }
  assign(child as Record<string, unknown> | Sparse, rest, value, fullKey);
}

function makeChild(nextSegment: string): Record<string, unknown> | Sparse {
  if (nextSegment === "" || /^\d+$/.test(nextSegment)) return { [ARRAY_MARK]: true, items: new Map(), next: 0 };
  return Object.create(null) as Record<string, unknown>;
}

function finalize(node: unknown): FormValue {
  if (typeof node === "string") return node;
  if (isSparse(node)) {
    return [...node.items.entries()].sort((a, b) => a[0] - b[0]).map(([, v]) => finalize(v));
  }
  const out: FormObject = {};
  for (const [k, v] of Object.entries(node as Record<string, unknown>)) out[k] = finalize(v);
  return out;
}

/** Used by tests and by the fake's own outgoing requests: the SDK's encoding (indexed arrays, bracketed keys). */
export function encodeForm(data: Record<string, unknown>): string {
  const pairs: string[] = [];
  const walk = (key: string, value: unknown) => {
    if (value === undefined) return;
    if (value === null || typeof value !== "object") {
      pairs.push(`${encodeURIComponent(key)}=${encodeURIComponent(value === null ? "" : String(value))}`);
    } else if (Array.isArray(value)) {
      value.forEach((v, i) => walk(`${key}[${i}]`, v));
    } else {
      for (const [k, v] of Object.entries(value)) walk(`${key}[${k}]`, v);
    }
  };
  for (const [k, v] of Object.entries(data)) walk(k, v);
  return pairs.join("&");
}
