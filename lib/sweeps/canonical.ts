/**
 * Canonical JSON: the one byte form of a value used for hashing (result cache,
 * spec identity) and for deriving seeds. Object keys are sorted by UTF-16 code
 * units at every level, arrays keep their order, numbers use the shortest
 * round-trip form of JSON.stringify (−0 writes as 0), and undefined object
 * fields are left out. Non-finite numbers have no JSON form and are refused.
 *
 * Pure: safe to import in the browser.
 */
export function canonicalJson(value: unknown): string {
  return write(value, "$");
}

function write(value: unknown, where: string): string {
  if (value === null) return "null";
  switch (typeof value) {
    case "number":
      if (!Number.isFinite(value)) throw new Error(`canonicalJson: ${where} is ${String(value)}, which has no JSON form`);
      return JSON.stringify(value);
    case "string":
    case "boolean":
      return JSON.stringify(value);
    case "object": {
      if (Array.isArray(value)) return `[${value.map((item, i) => write(item, `${where}[${i}]`)).join(",")}]`;
      const record = value as Record<string, unknown>;
      const keys = Object.keys(record)
        .filter((key) => record[key] !== undefined)
        .sort();
      return `{${keys.map((key) => `${JSON.stringify(key)}:${write(record[key], `${where}.${key}`)}`).join(",")}}`;
    }
    default:
      throw new Error(`canonicalJson: ${where} is a ${typeof value}, which has no JSON form`);
  }
}

/**
 * 32-bit FNV-1a over the UTF-16 code units of a string, then the MurmurHash3
 * fmix32 finaliser so that nearby inputs spread over all bits. Integer-only
 * (Math.imul, >>> 0), so it is bit-identical on every platform.
 */
export function hash32(text: string, seed = 0): number {
  let h = (0x811c9dc5 ^ seed) >>> 0;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return fmix32(h);
}

const float64 = new Float64Array(1);
const float64Words = new Uint32Array(float64.buffer);

function mixWord(h: number, word: number): number {
  // FNV-1a over the four bytes of a 32-bit word.
  h = Math.imul(h ^ (word & 0xff), 0x01000193) >>> 0;
  h = Math.imul(h ^ ((word >>> 8) & 0xff), 0x01000193) >>> 0;
  h = Math.imul(h ^ ((word >>> 16) & 0xff), 0x01000193) >>> 0;
  return Math.imul(h ^ (word >>> 24), 0x01000193) >>> 0;
}

function mixString(h: number, text: string): number {
  for (let i = 0; i < text.length; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193) >>> 0;
  return Math.imul(h ^ 0xff, 0x01000193) >>> 0; // terminator: "ab","c" ≠ "a","bc"
}

const sortedKeysCache = new Map<string, string[]>();

/**
 * 32-bit hash of a flat record of numbers and strings (a scene), keyed by `seed`: its keys in
 * sorted order, each followed by its value — strings by their UTF-16 code units, numbers by the
 * two 32-bit words of their IEEE 754 bits (−0 counted as 0) — through FNV-1a, then fmix32.
 * The same record gives the same hash on every platform and in any key order; it is the fast
 * equivalent of hash32(canonicalJson(record)) for records without nesting.
 */
export function hashFlatRecord(record: Readonly<Record<string, number | string>>, seed = 0): number {
  const signature = Object.keys(record).join(",");
  let keys = sortedKeysCache.get(signature);
  if (!keys) {
    keys = Object.keys(record).sort();
    sortedKeysCache.set(signature, keys);
  }
  let h = (0x811c9dc5 ^ seed) >>> 0;
  for (const key of keys) {
    h = mixString(h, key);
    const value = record[key];
    if (typeof value === "string") {
      h = mixString(h, value);
    } else {
      float64[0] = value === 0 ? 0 : value;
      h = mixWord(h, float64Words[0]);
      h = mixWord(h, float64Words[1]);
    }
  }
  return fmix32(h);
}

/** The MurmurHash3 32-bit finaliser. */
export function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b) >>> 0;
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35) >>> 0;
  h ^= h >>> 16;
  return h >>> 0;
}
