import type { Metadata } from "next";
import { connection } from "next/server";
import { buildOpenApiDocument } from "@/lib/api/openapi/document";

export const metadata: Metadata = { title: "API reference" };

type Json = Record<string, unknown>;

function schemaText(schema: unknown): string {
  return JSON.stringify(schema, null, 2);
}

/** The API reference, rendered from the same OpenAPI document /api/v1/openapi.json serves. */
export default async function ApiReferencePage() {
  await connection();
  const document = buildOpenApiDocument() as unknown as { paths: Record<string, Record<string, Json>>; components?: { schemas?: Json } };
  const groups = new Map<string, { method: string; path: string; op: Json }[]>();
  for (const [path, item] of Object.entries(document.paths)) {
    for (const [method, op] of Object.entries(item)) {
      const tag = ((op.tags as string[] | undefined) ?? ["Other"])[0];
      if (!groups.has(tag)) groups.set(tag, []);
      groups.get(tag)!.push({ method, path, op });
    }
  }
  return (
    <div className="space-y-8">
      <header>
        <p className="text-sm font-medium text-ink-muted">Reference</p>
        <h1 className="text-3xl font-bold tracking-tight">Kickdrift API</h1>
        <p className="mt-2 max-w-3xl text-ink-muted">
          Every route under <code>/api/v1</code>, generated from the schemas the server validates with. The machine-readable document is{" "}
          <a className="text-action underline" href="/api/v1/openapi.json">
            /api/v1/openapi.json
          </a>{" "}
          (OpenAPI 3.1). Errors are <code>{"{ error: { code, message, field? } }"}</code>.
        </p>
      </header>
      {[...groups].map(([tag, ops]) => (
        <section key={tag} aria-labelledby={`tag-${tag}`}>
          <h2 id={`tag-${tag}`} className="mb-3 text-xl font-semibold">
            {tag}
          </h2>
          <ul className="space-y-3">
            {ops.map(({ method, path, op }) => {
              const body = (op.requestBody as { content?: Record<string, { schema?: unknown }> } | undefined)?.content;
              const security = (op.security as Record<string, string[]>[] | undefined) ?? [];
              const who = security.length === 0 ? "anyone" : security.map((s) => Object.entries(s).map(([k, v]) => (v.length ? `${k} (${v.join(", ")})` : k)).join(" + ")).join(" or ");
              return (
                <li key={`${method} ${path}`} className="rounded-lg border border-line bg-surface p-4" data-testid="api-operation">
                  <p className="font-mono text-sm">
                    <span className="mr-2 font-bold uppercase">{method}</span>
                    {path}
                  </p>
                  <p className="mt-1 text-sm">{String(op.summary ?? "")}</p>
                  <p className="mt-1 text-xs text-ink-muted">
                    Success: {Object.keys(op.responses as Json).filter((s) => s.startsWith("2")).join(", ")} · Access: {who}
                  </p>
                  {body ? (
                    <details className="mt-2">
                      <summary className="cursor-pointer text-sm">Request body ({Object.keys(body).join(", ")})</summary>
                      <pre className="mt-2 max-h-96 overflow-auto rounded bg-surface-muted p-3 text-xs">{schemaText(Object.values(body)[0]?.schema)}</pre>
                    </details>
                  ) : null}
                </li>
              );
            })}
          </ul>
        </section>
      ))}
    </div>
  );
}
