"use client";

import { Button } from "@/components/ui";
import { formatCompute } from "@/lib/billing/format";
import { formatPriceCents } from "@/lib/billing/packs";
import type { Quote } from "../sweep-api";

/**
 * The last step before a sweep runs: its name, the cells it runs (and those earlier sweeps already
 * computed), the expected cost and the ceiling reserved now.
 */
export function ConfirmRun({ quote, name, busy, onRun, onBack }: { quote: Quote; name: string; busy: boolean; onRun: () => void; onBack: () => void }) {
  return (
    <section className="rounded-lg border-2 border-action bg-surface p-5" role="dialog" aria-labelledby="confirm-heading" data-testid="confirm-sweep">
      <h2 id="confirm-heading" className="font-semibold">
        Run this sweep?
      </h2>
      <p className="mt-1 text-sm" data-testid="confirm-name">
        Named “{name || "Untitled sweep"}”.
      </p>
      <p className="mt-1 text-sm text-ink-muted">
        {quote.cachedCells > 0 ? `${quote.cells.toLocaleString("en")} cells, ${quote.cachedCells.toLocaleString("en")} already computed by earlier sweeps (not billed again); ` : ""}
        {`${quote.cellsToRun.toLocaleString("en")} cells to run: expected ${formatCompute(quote.expectedMs)} (${formatPriceCents(quote.money.expectedCents)}), `}
        {`at most ${formatCompute(quote.ceilingMs)} (${formatPriceCents(quote.money.ceilingCents)}). `}
        The ceiling is reserved now; the sweep is billed the work its cells do, never more than the ceiling.
      </p>
      <div className="mt-3 flex gap-2">
        <Button onClick={onRun} disabled={busy}>
          {busy ? "Starting…" : "Run sweep"}
        </Button>
        <Button variant="ghost" onClick={onBack}>
          Back to the spec
        </Button>
      </div>
    </section>
  );
}
