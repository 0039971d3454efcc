import "server-only";

/**
 * The Prometheus text exposition format (version 0.0.4): `# HELP` and `# TYPE` lines, then one
 * sample a line, `name{label="value"} number`. Pure.
 */
export const PROMETHEUS_CONTENT_TYPE = "text/plain; version=0.0.4; charset=utf-8";

export interface MetricSample {
  labels?: Record<string, string>;
  value: number;
}

export interface Metric {
  name: string;
  help: string;
  type: "gauge" | "counter";
  samples: MetricSample[];
}

const NAME = /^[a-zA-Z_:][a-zA-Z0-9_:]*$/;
const LABEL = /^[a-zA-Z_][a-zA-Z0-9_]*$/;

function escapeHelp(text: string): string {
  return text.replaceAll("\\", "\\\\").replaceAll("\n", "\\n");
}

function escapeLabelValue(text: string): string {
  return text.replaceAll("\\", "\\\\").replaceAll('"', '\\"').replaceAll("\n", "\\n");
}

function formatValue(value: number): string {
  if (Number.isNaN(value)) return "NaN";
  if (value === Number.POSITIVE_INFINITY) return "+Inf";
  if (value === Number.NEGATIVE_INFINITY) return "-Inf";
  return String(value);
}

/** The metrics as one exposition text, in the order given, ending with a newline. */
export function prometheusText(metrics: readonly Metric[]): string {
  const lines: string[] = [];
  for (const metric of metrics) {
    if (!NAME.test(metric.name)) throw new Error(`invalid metric name ${JSON.stringify(metric.name)}`);
    lines.push(`# HELP ${metric.name} ${escapeHelp(metric.help)}`, `# TYPE ${metric.name} ${metric.type}`);
    for (const sample of metric.samples) {
      const labels = Object.entries(sample.labels ?? {});
      for (const [key] of labels) if (!LABEL.test(key) || key.startsWith("__")) throw new Error(`invalid label name ${JSON.stringify(key)}`);
      const labelText = labels.length ? `{${labels.map(([k, v]) => `${k}="${escapeLabelValue(v)}"`).join(",")}}` : "";
      lines.push(`${metric.name}${labelText} ${formatValue(sample.value)}`);
    }
  }
  return `${lines.join("\n")}\n`;
}

export function prometheusResponse(metrics: readonly Metric[]): Response {
  return new Response(prometheusText(metrics), { status: 200, headers: { "content-type": PROMETHEUS_CONTENT_TYPE, "cache-control": "no-store" } });
}
