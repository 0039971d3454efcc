import type { Metadata } from "next";
import Link from "next/link";
import { OVERLAY_TEXT, ResultsCaution, VerdictGlossary } from "@/components/help/verdict-help";
import { Card, PageHeading } from "@/components/ui";

export const metadata: Metadata = { title: "Help" };

/** Verdicts, map lines and the caution, in one place inside the app; the API reference one link away. */
export default function HelpPage() {
  return (
    <main className="mx-auto max-w-5xl space-y-6 px-4 py-10">
      <PageHeading eyebrow="Help" title="Reading a sweep">
        Every cell of a sweep gets one verdict; the lines on a map show where the theory says trouble starts.
      </PageHeading>
      <Card title="Verdicts">
        <VerdictGlossary />
      </Card>
      <Card title="Lines on the map">
        <dl className="grid gap-3 text-sm sm:grid-cols-3">
          {OVERLAY_TEXT.map((overlay) => (
            <div key={overlay.name}>
              <dt className="font-semibold">{overlay.name}</dt>
              <dd className="text-ink-muted">
                {overlay.lines[0]} {overlay.lines[1]}
              </dd>
            </div>
          ))}
        </dl>
      </Card>
      <Card title="What the numbers are for">
        <ResultsCaution />
      </Card>
      <p className="text-sm">
        <Link href="/help/api" className="text-action hover:underline">
          API reference
        </Link>
      </p>
    </main>
  );
}
