/**
 * The packed form of a run of cell results: one byte array holding, for n cells in index order,
 * their indices, scenario keys (for the result cache), metrics, verdicts and reasons. The worker
 * thread writes it, the main thread stores it as it is (one blob per chunk), and readers decode
 * it only when they serve cells. Nothing per cell is built on the main thread on the write path.
 *
 * Layout (little-endian; every section starts on an 8-byte boundary):
 *   header  8 × u32: magic "KDR1", version, n, reason bytes, flags (bit 0: keys present), 3 reserved
 *           (version 1: 11 metrics a cell, the first METRIC_COUNT_V1 of METRIC_KEYS; version 2: all of
 *           METRIC_KEYS; version 3: STORED_METRIC_KEYS, METRIC_KEYS then the rotation metrics. A run
 *           of an older version is widened on reading, the metrics it did not store null, its
 *           verdicts as stored.)
 *   indices i32[n]
 *   keys    u32[4n]   (128-bit scenario key per cell; zero when the flag is clear)
 *   metrics f64[n · STORED_METRIC_KEYS.length]  (booleans 0/1; null as 0 with its bit set in the mask;
 *                                        a metric the engine did not return is null)
 *   mask    u8[n · MASK_BYTES]           (one bit per metric: set where the metric is null)
 *   verdict u8[n]                        (index into VERDICTS)
 *   reasons UTF-8, separated by U+001E (a reason never holds it: the writer checks)
 *
 * Metrics are stored exactly as the engine returned them (NaN, ±Infinity and −0 included); the
 * serialisers decide how each is written, so the bytes served do not depend on which path
 * (engine, cache, merge) produced a cell.
 *
 * Pure: safe to import anywhere (TextEncoder/TextDecoder only).
 */
import { VERDICTS, type Metrics, type Verdict } from "../physics/types";
import { METRIC_COUNT_V1, METRIC_COUNT_V2, STORED_METRIC_KEYS, type CellResult } from "./results";

export const METRIC_COUNT = STORED_METRIC_KEYS.length;
export const MASK_BYTES = Math.ceil(METRIC_COUNT / 8);
export const KEY_WORDS = 4;
const MAGIC = 0x3152444b; // "KDR1" little-endian
const VERSION = 3;
/** The first format version that stores the rotation metrics (older runs read them as null). */
export const ROTATION_METRICS_VERSION = 3;
/** Metrics a cell of each older version stores (the first ones of STORED_METRIC_KEYS). */
const OLD_METRIC_COUNTS: ReadonlyMap<number, number> = new Map([
  [1, METRIC_COUNT_V1],
  [2, METRIC_COUNT_V2],
]);
const HEADER_BYTES = 32;
const FLAG_KEYS = 1;
const REASON_SEPARATOR = "\u001e";
const BOOLEAN_METRICS: ReadonlySet<string> = new Set(["tunneled", "exploded"]);
const IS_BOOLEAN = STORED_METRIC_KEYS.map((key) => BOOLEAN_METRICS.has(key));
export const VERDICT_CODES: ReadonlyMap<string, number> = new Map(VERDICTS.map((verdict, code) => [verdict, code]));

const align8 = (n: number) => (n + 7) & ~7;

interface Sections {
  indices: number;
  keys: number;
  metrics: number;
  mask: number;
  verdicts: number;
  reasons: number;
}

function sectionsFor(n: number, metricCount: number = METRIC_COUNT, maskBytes: number = MASK_BYTES): Sections {
  const indices = HEADER_BYTES;
  const keys = align8(indices + 4 * n);
  const metrics = align8(keys + 16 * n);
  const mask = metrics + 8 * metricCount * n;
  const verdicts = mask + maskBytes * n;
  const reasons = verdicts + n;
  return { indices, keys, metrics, mask, verdicts, reasons };
}

/** The numeric part of a packed run, filled cell by cell; `finish` appends the reasons. */
export class PackedWriter {
  readonly count: number;
  readonly indices: Int32Array;
  readonly keys: Uint32Array;
  readonly metrics: Float64Array;
  readonly mask: Uint8Array;
  readonly verdicts: Uint8Array;
  private readonly reasons: string[];
  private readonly buffer: ArrayBuffer;
  private readonly sections: Sections;
  private written = 0;
  hasKeys = false;
  /** A cell copied from a run without keys: the result has none either (a zero key is no key). */
  private keysMissing = false;

  constructor(count: number) {
    this.count = count;
    this.sections = sectionsFor(count);
    this.buffer = new ArrayBuffer(this.sections.reasons);
    this.indices = new Int32Array(this.buffer, this.sections.indices, count);
    this.keys = new Uint32Array(this.buffer, this.sections.keys, KEY_WORDS * count);
    this.metrics = new Float64Array(this.buffer, this.sections.metrics, METRIC_COUNT * count);
    this.mask = new Uint8Array(this.buffer, this.sections.mask, MASK_BYTES * count);
    this.verdicts = new Uint8Array(this.buffer, this.sections.verdicts, count);
    this.reasons = new Array<string>(count);
  }

  /** Slot of the next cell (fill its key with `keys` at slot · 4 before or after). */
  get next(): number {
    return this.written;
  }

  /** Append one cell's result as the engine returned it. */
  add(index: number, verdict: Verdict, reason: string, metrics: Metrics): void {
    const n = this.written++;
    this.indices[n] = index;
    this.verdicts[n] = VERDICT_CODES.get(verdict) as number;
    this.reasons[n] = reason;
    const record = metrics as unknown as Record<string, number | boolean | null>;
    const base = n * METRIC_COUNT;
    for (let m = 0; m < METRIC_COUNT; m++) {
      const value = record[STORED_METRIC_KEYS[m]];
      if (value === null || value === undefined) {
        this.metrics[base + m] = 0;
        this.mask[n * MASK_BYTES + (m >> 3)] |= 1 << (m & 7);
      } else {
        this.metrics[base + m] = typeof value === "boolean" ? (value ? 1 : 0) : value;
      }
    }
  }

  /** Copy cell `from` of a packed run into the next slot (the result cache and merges). */
  copyFrom(source: PackedView, from: number): void {
    const n = this.written++;
    this.indices[n] = source.indices[from];
    this.keys.set(source.keys.subarray(from * KEY_WORDS, (from + 1) * KEY_WORDS), n * KEY_WORDS);
    this.metrics.set(source.metrics.subarray(from * METRIC_COUNT, (from + 1) * METRIC_COUNT), n * METRIC_COUNT);
    this.mask.set(source.mask.subarray(from * MASK_BYTES, (from + 1) * MASK_BYTES), n * MASK_BYTES);
    this.verdicts[n] = source.verdicts[from];
    this.reasons[n] = source.reason(from);
    if (source.hasKeys) this.hasKeys = true;
    else this.keysMissing = true;
  }

  /** Every cell's key at once (4 words a cell, in slot order): the run then has keys. */
  setAllKeys(keys: Uint32Array): void {
    if (keys.length !== KEY_WORDS * this.count) throw new Error(`${keys.length / KEY_WORDS} keys for ${this.count} cells`);
    this.keys.set(keys);
    this.hasKeys = true;
    this.keysMissing = false;
  }

  /** Same as copyFrom, but the cell gets another index (a cached result reused at a new position). */
  copyAs(source: PackedView, from: number, index: number): void {
    this.copyFrom(source, from);
    this.indices[this.written - 1] = index;
  }

  finish(): Uint8Array {
    if (this.written !== this.count) throw new Error(`packed run holds ${this.written} of ${this.count} cells`);
    for (const reason of this.reasons) if (reason.includes(REASON_SEPARATOR)) throw new Error("a reason holds U+001E, the packed separator");
    const reasonBytes = new TextEncoder().encode(this.reasons.join(REASON_SEPARATOR));
    const out = new Uint8Array(this.sections.reasons + reasonBytes.length);
    out.set(new Uint8Array(this.buffer), 0);
    out.set(reasonBytes, this.sections.reasons);
    const header = new Uint32Array(out.buffer, 0, HEADER_BYTES / 4);
    header[0] = MAGIC;
    header[1] = VERSION;
    header[2] = this.count;
    header[3] = reasonBytes.length;
    header[4] = this.hasKeys && !this.keysMissing ? FLAG_KEYS : 0;
    return out;
  }
}

/** A decoded packed run: typed-array views on the bytes; reasons decoded on first use. */
export class PackedView {
  readonly count: number;
  readonly hasKeys: boolean;
  /** The format version the bytes were written in (1, 2 or 3); older runs are widened on reading. */
  readonly storedVersion: number;
  readonly indices: Int32Array;
  readonly keys: Uint32Array;
  readonly metrics: Float64Array;
  readonly mask: Uint8Array;
  readonly verdicts: Uint8Array;
  private readonly reasonBytes: Uint8Array;
  private reasonList: string[] | null = null;

  constructor(bytes: Uint8Array) {
    if (bytes.byteLength < HEADER_BYTES) throw new Error(`packed results: ${bytes.byteLength} bytes is shorter than the header`);
    // Typed arrays need aligned offsets: copy when the bytes sit at an odd place in their buffer.
    let data = bytes.byteOffset % 8 === 0 ? bytes : bytes.slice();
    let header = new Uint32Array(data.buffer, data.byteOffset, HEADER_BYTES / 4);
    const storedVersion = header[1];
    const oldCount = header[0] === MAGIC ? OLD_METRIC_COUNTS.get(storedVersion) : undefined;
    if (oldCount !== undefined) {
      data = widenOldVersion(data, oldCount);
      header = new Uint32Array(data.buffer, data.byteOffset, HEADER_BYTES / 4);
    }
    if (header[0] !== MAGIC || header[1] !== VERSION) throw new Error("packed results: unknown format or version");
    const n = header[2];
    const sections = sectionsFor(n);
    if (data.byteLength !== sections.reasons + header[3]) throw new Error(`packed results: ${data.byteLength} bytes where the header describes ${sections.reasons + header[3]}`);
    this.count = n;
    this.storedVersion = storedVersion;
    this.hasKeys = (header[4] & FLAG_KEYS) !== 0;
    const at = data.byteOffset;
    this.indices = new Int32Array(data.buffer, at + sections.indices, n);
    this.keys = new Uint32Array(data.buffer, at + sections.keys, KEY_WORDS * n);
    this.metrics = new Float64Array(data.buffer, at + sections.metrics, METRIC_COUNT * n);
    this.mask = new Uint8Array(data.buffer, at + sections.mask, MASK_BYTES * n);
    this.verdicts = new Uint8Array(data.buffer, at + sections.verdicts, n);
    this.reasonBytes = new Uint8Array(data.buffer, at + sections.reasons, header[3]);
  }

  private allReasons(): string[] {
    if (!this.reasonList) this.reasonList = this.count === 0 ? [] : new TextDecoder().decode(this.reasonBytes).split(REASON_SEPARATOR);
    return this.reasonList;
  }

  reason(n: number): string {
    return this.allReasons()[n];
  }

  verdict(n: number): Verdict {
    return VERDICTS[this.verdicts[n]];
  }

  isNull(n: number, m: number): boolean {
    return ((this.mask[n * MASK_BYTES + (m >> 3)] >> (m & 7)) & 1) === 1;
  }

  /** Metric m of cell n as the engine returned it. */
  metric(n: number, m: number): number | boolean | null {
    if (this.isNull(n, m)) return null;
    const value = this.metrics[n * METRIC_COUNT + m];
    return IS_BOOLEAN[m] ? value === 1 : value;
  }

  metricsOf(n: number): Metrics {
    const out: Record<string, number | boolean | null> = {};
    for (let m = 0; m < METRIC_COUNT; m++) out[STORED_METRIC_KEYS[m]] = this.metric(n, m);
    return out as unknown as Metrics;
  }

  result(n: number, axisValuesOf: (index: number) => (number | string)[]): CellResult {
    const index = this.indices[n];
    return { index, axisValues: axisValuesOf(index), verdict: this.verdict(n), reason: this.reason(n), metrics: this.metricsOf(n) };
  }

  /** Position of a cell index in this run (binary search; indices ascend), or −1. */
  find(index: number): number {
    let lo = 0;
    let hi = this.count - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      const value = this.indices[mid];
      if (value === index) return mid;
      if (value < index) lo = mid + 1;
      else hi = mid - 1;
    }
    return -1;
  }
}

/**
 * A run of an older version (storing the first `oldCount` metrics) in the current layout: same
 * cells, keys, verdicts and reasons; the metrics added since are null. Stored results keep their
 * verdicts (version-1 runs were judged by verdict rules 1).
 */
function widenOldVersion(data: Uint8Array, oldCount: number): Uint8Array {
  const header = new Uint32Array(data.buffer, data.byteOffset, HEADER_BYTES / 4);
  const n = header[2];
  const oldMaskBytes = Math.ceil(oldCount / 8);
  const old = sectionsFor(n, oldCount, oldMaskBytes);
  if (data.byteLength !== old.reasons + header[3]) throw new Error(`packed results: ${data.byteLength} bytes where the header describes ${old.reasons + header[3]}`);
  const now = sectionsFor(n);
  const out = new Uint8Array(now.reasons + header[3]);
  out.set(data.subarray(0, old.metrics), 0);
  const oldMetrics = new Float64Array(data.buffer, data.byteOffset + old.metrics, oldCount * n);
  const newMetrics = new Float64Array(out.buffer, now.metrics, METRIC_COUNT * n);
  const oldMask = data.subarray(old.mask, old.mask + oldMaskBytes * n);
  const newMask = out.subarray(now.mask, now.mask + MASK_BYTES * n);
  for (let c = 0; c < n; c++) {
    newMetrics.set(oldMetrics.subarray(c * oldCount, (c + 1) * oldCount), c * METRIC_COUNT);
    for (let b = 0; b < oldMaskBytes; b++) newMask[c * MASK_BYTES + b] = oldMask[c * oldMaskBytes + b];
    for (let m = oldCount; m < METRIC_COUNT; m++) newMask[c * MASK_BYTES + (m >> 3)] |= 1 << (m & 7);
  }
  out.set(data.subarray(old.verdicts, old.verdicts + n), now.verdicts);
  out.set(data.subarray(old.reasons, old.reasons + header[3]), now.reasons);
  new Uint32Array(out.buffer, 0, HEADER_BYTES / 4)[1] = VERSION;
  return out;
}

/** Cells of two packed runs with disjoint indices, merged in index order. */
export function mergePacked(a: PackedView, b: PackedView): Uint8Array {
  const writer = new PackedWriter(a.count + b.count);
  let i = 0;
  let j = 0;
  while (i < a.count || j < b.count) {
    if (j >= b.count || (i < a.count && a.indices[i] < b.indices[j])) writer.copyFrom(a, i++);
    else if (i >= a.count || b.indices[j] < a.indices[i]) writer.copyFrom(b, j++);
    else throw new Error(`cell ${a.indices[i]} is in both runs`);
  }
  return writer.finish();
}

/** The same run with every cell's key (4 words a cell, in the run's order). */
export function withKeys(view: PackedView, keys: Uint32Array): Uint8Array {
  const writer = new PackedWriter(view.count);
  for (let n = 0; n < view.count; n++) writer.copyFrom(view, n);
  writer.setAllKeys(keys);
  return writer.finish();
}

/** Verdict counts of a packed run, by verdict code. */
export function verdictTally(view: PackedView): number[] {
  const tally = new Array<number>(VERDICTS.length).fill(0);
  for (let n = 0; n < view.count; n++) tally[view.verdicts[n]]++;
  return tally;
}
