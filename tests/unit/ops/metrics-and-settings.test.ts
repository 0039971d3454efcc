/**
 * The metrics text format. Expected texts follow the Prometheus exposition format documentation
 * ("Exposition formats", text-based format version 0.0.4: HELP/TYPE lines, label value escaping of
 * backslash, double quote and line feed, NaN and +Inf spelled so).
 */
import { describe, expect, it } from "vitest";
import { PROMETHEUS_CONTENT_TYPE, prometheusResponse, prometheusText } from "../../../lib/ops/prometheus";
import { workerConfig, WorkerConfigError } from "../../../workers/worker-config";

describe("prometheusText", () => {
  it("writes HELP, TYPE and one line per sample, with labels", () => {
    const text = prometheusText([
      { name: "kickdrift_queue_depth_chunks", type: "gauge", help: "Chunks waiting.", samples: [{ value: 7 }] },
      {
        name: "kickdrift_sweeps",
        type: "gauge",
        help: "Sweeps by status.",
        samples: [
          { labels: { status: "queued" }, value: 2 },
          { labels: { status: "done" }, value: 40 },
        ],
      },
    ]);
    expect(text).toBe(
      [
        "# HELP kickdrift_queue_depth_chunks Chunks waiting.",
        "# TYPE kickdrift_queue_depth_chunks gauge",
        "kickdrift_queue_depth_chunks 7",
        "# HELP kickdrift_sweeps Sweeps by status.",
        "# TYPE kickdrift_sweeps gauge",
        'kickdrift_sweeps{status="queued"} 2',
        'kickdrift_sweeps{status="done"} 40',
        "",
      ].join("\n"),
    );
  });

  it("escapes label values and help text, and spells special values", () => {
    const text = prometheusText([
      { name: "kickdrift_worker_ready", type: "gauge", help: "line one\nback\\slash", samples: [{ labels: { worker: 'wrk_"a"\\b\nc' }, value: Number.NaN }] },
      { name: "kickdrift_x_total", type: "counter", help: "h", samples: [{ value: Number.POSITIVE_INFINITY }] },
    ]);
    expect(text).toContain("# HELP kickdrift_worker_ready line one\\nback\\\\slash\n");
    expect(text).toContain('kickdrift_worker_ready{worker="wrk_\\"a\\"\\\\b\\nc"} NaN\n');
    expect(text).toContain("kickdrift_x_total +Inf\n");
  });

  it("refuses names the format does not allow", () => {
    expect(() => prometheusText([{ name: "queue-depth", type: "gauge", help: "h", samples: [] }])).toThrow(/invalid metric name/);
    expect(() => prometheusText([{ name: "ok", type: "gauge", help: "h", samples: [{ labels: { __reserved: "x" }, value: 1 }] }])).toThrow(/invalid label name/);
  });

  it("answers with the format's content type", async () => {
    const res = prometheusResponse([{ name: "up", type: "gauge", help: "h", samples: [{ value: 1 }] }]);
    expect(res.headers.get("content-type")).toBe(PROMETHEUS_CONTENT_TYPE);
    expect(await res.text()).toMatch(/^# HELP up h\n# TYPE up gauge\nup 1\n$/);
  });
});

describe("worker settings", () => {
  it("needs DATABASE_URL and names it", () => {
    expect(() => workerConfig({})).toThrow(WorkerConfigError);
    expect(() => workerConfig({})).toThrow(/DATABASE_URL is not set/);
  });

  it("takes integers within limits and names the setting and the limit otherwise", () => {
    const base = { DATABASE_URL: "postgres://kd@db/kickdrift" };
    expect(workerConfig({ ...base, KICKDRIFT_WORKER_THREADS: "3", KICKDRIFT_LEASE_MS: "30000" })).toMatchObject({ threads: 3, leaseMs: 30_000, port: 3100, shutdownGraceMs: 8_000 });
    expect(() => workerConfig({ ...base, KICKDRIFT_WORKER_THREADS: "0" })).toThrow(/KICKDRIFT_WORKER_THREADS must be an integer from 1 to 256; got "0"/);
    expect(() => workerConfig({ ...base, KICKDRIFT_LEASE_MS: "1.5" })).toThrow(/KICKDRIFT_LEASE_MS must be an integer/);
    expect(() => workerConfig({ ...base, KICKDRIFT_WORKER_ENTRY: "wasm" })).toThrow(/KICKDRIFT_WORKER_ENTRY must be source or bundle/);
  });
});
