import "server-only";
import type { FormObject, FormValue } from "./form";
import { invalidParam, missingParam, unknownParam } from "./errors";

/**
 * Typed readers over parsed form parameters. Each names the parameter in Stripe's bracket notation
 * (`line_items[0][price]`) when it rejects a value, so the SDK's `err.param` points at the field.
 */
export class Params {
  constructor(
    readonly raw: FormObject,
    readonly prefix = "",
  ) {}

  name(key: string): string {
    return this.prefix ? `${this.prefix}[${key}]` : key;
  }

  has(key: string): boolean {
    return this.raw[key] !== undefined;
  }

  /** Rejects keys the endpoint does not take, as Stripe does (`parameter_unknown`). */
  allowOnly(keys: readonly string[]): this {
    for (const key of Object.keys(this.raw)) {
      if (key !== "expand" && !keys.includes(key)) throw unknownParam(this.name(key));
    }
    return this;
  }

  string(key: string, opts: { required?: boolean; max?: number; oneOf?: readonly string[] } = {}): string | undefined {
    const value = this.raw[key];
    if (value === undefined) {
      if (opts.required) throw missingParam(this.name(key));
      return undefined;
    }
    if (typeof value !== "string") throw invalidParam(this.name(key), `Invalid string: ${this.name(key)} must be a string.`);
    if (opts.required && value === "") throw invalidParam(this.name(key), `You passed an empty string for '${this.name(key)}'. We assume empty values are an attempt to unset a parameter; however '${this.name(key)}' cannot be unset. You should remove '${this.name(key)}' from your request or supply a non-empty value.`, "parameter_invalid_empty");
    if (opts.max !== undefined && value.length > opts.max) {
      throw invalidParam(this.name(key), `Invalid ${this.name(key)}: must be at most ${opts.max} characters`);
    }
    if (opts.oneOf && !opts.oneOf.includes(value)) {
      throw invalidParam(this.name(key), `Invalid ${this.name(key)}: must be one of ${opts.oneOf.join(", ")}`);
    }
    return value;
  }

  requiredString(key: string, opts: { max?: number; oneOf?: readonly string[] } = {}): string {
    return this.string(key, { ...opts, required: true }) as string;
  }

  /** Empty string means "unset" in Stripe's encoding; the caller gets null. */
  nullableString(key: string, max = 5000): string | null | undefined {
    const value = this.string(key, { max });
    if (value === "") return null;
    return value;
  }

  integer(key: string, opts: { required?: boolean; min?: number; max?: number } = {}): number | undefined {
    const value = this.raw[key];
    if (value === undefined || value === "") {
      if (opts.required) throw missingParam(this.name(key));
      return undefined;
    }
    if (typeof value !== "string" || !/^-?\d+$/.test(value)) {
      throw invalidParam(this.name(key), `Invalid integer: ${typeof value === "string" ? value : "(not a scalar)"}`, "parameter_invalid_integer");
    }
    const n = Number(value);
    if (!Number.isSafeInteger(n)) throw invalidParam(this.name(key), `Invalid integer: ${value}`, "parameter_invalid_integer");
    if (opts.min !== undefined && n < opts.min) {
      throw invalidParam(this.name(key), `Invalid ${this.name(key)}: must be greater than or equal to ${opts.min}`);
    }
    if (opts.max !== undefined && n > opts.max) {
      throw invalidParam(this.name(key), `Invalid ${this.name(key)}: must be less than or equal to ${opts.max}`);
    }
    return n;
  }

  boolean(key: string): boolean | undefined {
    const value = this.raw[key];
    if (value === undefined || value === "") return undefined;
    if (value === "true") return true;
    if (value === "false") return false;
    throw invalidParam(this.name(key), `Invalid boolean: ${typeof value === "string" ? value : "(not a scalar)"}`);
  }

  /** A decimal string with at most 12 decimal places (Stripe's limit for `*_decimal` amounts). */
  decimal(key: string): string | undefined {
    const value = this.raw[key];
    if (value === undefined || value === "") return undefined;
    if (typeof value !== "string" || !/^\d+(\.\d{1,12})?$/.test(value)) {
      throw invalidParam(this.name(key), `Invalid decimal: ${typeof value === "string" ? value : "(not a scalar)"} (a non-negative number with at most 12 decimal places)`);
    }
    return value;
  }

  object(key: string, opts: { required?: boolean } = {}): Params | undefined {
    const value = this.raw[key];
    if (value === undefined) {
      if (opts.required) throw missingParam(this.name(key));
      return undefined;
    }
    if (typeof value === "string" || Array.isArray(value)) {
      throw invalidParam(this.name(key), `Invalid object: ${this.name(key)} must be a hash (e.g. ${this.name(key)}[field]=value).`);
    }
    return new Params(value, this.name(key));
  }

  array(key: string, opts: { required?: boolean; maxItems?: number } = {}): Params[] {
    const value = this.raw[key];
    if (value === undefined) {
      if (opts.required) throw missingParam(this.name(key));
      return [];
    }
    if (!Array.isArray(value)) throw invalidParam(this.name(key), `Invalid array: ${this.name(key)} must be an array (e.g. ${this.name(key)}[0][field]=value).`);
    if (opts.maxItems !== undefined && value.length > opts.maxItems) {
      throw invalidParam(this.name(key), `Invalid ${this.name(key)}: at most ${opts.maxItems} items are allowed`);
    }
    return value.map((item, i) => {
      if (typeof item === "string" || Array.isArray(item)) {
        throw invalidParam(`${this.name(key)}[${i}]`, `Invalid object: ${this.name(key)}[${i}] must be a hash.`);
      }
      return new Params(item, `${this.name(key)}[${i}]`);
    });
  }

  stringArray(key: string): string[] | undefined {
    const value = this.raw[key];
    if (value === undefined) return undefined;
    const list: FormValue[] = Array.isArray(value) ? value : [value];
    return list.map((item, i) => {
      if (typeof item !== "string") throw invalidParam(`${this.name(key)}[${i}]`, `Invalid string in ${this.name(key)}`);
      return item;
    });
  }

  /** Stripe's metadata rules: ≤50 keys, key ≤40 chars, value ≤500 chars; "" unsets a key, `metadata=` clears all. */
  metadata(key = "metadata"): Record<string, string | null> | "clear" | undefined {
    const value = this.raw[key];
    if (value === undefined) return undefined;
    if (value === "") return "clear";
    if (typeof value === "string" || Array.isArray(value)) {
      throw invalidParam(this.name(key), `Invalid object: ${this.name(key)} must be a hash of string keys and values.`);
    }
    const out: Record<string, string | null> = {};
    for (const [k, v] of Object.entries(value)) {
      if (typeof v !== "string") throw invalidParam(`${this.name(key)}[${k}]`, `Invalid metadata value for '${k}': must be a string.`);
      if (k.length > 40) throw invalidParam(`${this.name(key)}[${k}]`, `Metadata keys can be at most 40 characters; '${k}' is ${k.length}.`);
      if (v.length > 500) throw invalidParam(`${this.name(key)}[${k}]`, `Metadata values can be at most 500 characters; '${k}' has ${v.length}.`);
      out[k] = v === "" ? null : v;
    }
    return out;
  }
}

export function applyMetadata(
  current: Record<string, string>,
  update: Record<string, string | null> | "clear" | undefined,
  param = "metadata",
): Record<string, string> {
  if (update === undefined) return current;
  if (update === "clear") return {};
  const next = { ...current };
  for (const [k, v] of Object.entries(update)) {
    if (v === null) delete next[k];
    else next[k] = v;
  }
  if (Object.keys(next).length > 50) throw invalidParam(param, `Metadata can have at most 50 keys; this update would leave ${Object.keys(next).length}.`);
  return next;
}
