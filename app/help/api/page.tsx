import type { Metadata } from "next";
import { readFile } from "node:fs/promises";
import path from "node:path";
import { PageHeading } from "@/components/ui";

export const metadata: Metadata = { title: "API reference" };
export const dynamic = "force-dynamic";

/** The HTTP API reference (docs/api.md, the same file the repository ships), readable from the token page. */
export default async function ApiReferencePage() {
  const text = await readFile(path.join(process.cwd(), "docs", "api.md"), "utf8");
  return (
    <main className="mx-auto max-w-5xl px-4 py-10">
      <PageHeading eyebrow="Help" title="API reference">
        Every route under <code className="font-mono">/api/v1</code> with curl examples. Use an API token from your studio&apos;s Tokens tab.
      </PageHeading>
      <pre className="overflow-x-auto whitespace-pre-wrap rounded-lg border border-line bg-surface p-5 font-mono text-xs leading-relaxed" data-testid="api-reference">
        {text}
      </pre>
    </main>
  );
}
