"use client";

import { Card, cx } from "@/components/ui";
import { formatCompute } from "@/lib/billing/format";
import { formatPriceCents } from "@/lib/billing/packs";
import { WORK_UNITS_PER_BILLED_MS } from "@/lib/sweeps/metering-rate";
import { formatMinutes, type Quote } from "../sweep-api";

function formatTenthsOfCent(tenths: number): string {
  return `${(tenths / 10).toFixed(tenths % 10 === 0 ? 0 : 1)}¢`;
}

/** The quote beside the builder: what the spec on screen would cost, against the studio's balance and limits. */
export function QuotePanel({ quote, pending, error }: { quote: Quote | undefined; pending: boolean; error: string | null }) {
  const rows: [string, string][] = quote
    ? [
        ["Cells", quote.cells.toLocaleString("en")],
        ["Cached cells (not billed)", quote.cachedCells.toLocaleString("en")],
        ["Cells to run", quote.cellsToRun.toLocaleString("en")],
        ["Integrator steps", quote.steps.toLocaleString("en")],
        ["Ceiling (most it can cost)", `${formatCompute(quote.ceilingMs)} · ${formatPriceCents(quote.money.ceilingCents)}`],
        ["Ceiling in ms", `${quote.ceilingMs.toLocaleString("en")} ms`],
        ["Expected", `${formatCompute(quote.expectedMs)} · ${formatPriceCents(quote.money.expectedCents)}`],
        ["Expected in ms", `${quote.expectedMs.toLocaleString("en")} ms`],
        ["Ceiling from prepaid minutes", `${formatCompute(quote.money.ceilingPrepaidMs)} at ${formatTenthsOfCent(quote.money.prepaidTenthsOfCentPerMinute)}/min (${quote.money.prepaidPriceSource === "purchases" ? "your packs' average" : "smallest pack's list price"})`],
        ...(quote.money.ceilingOverageMs > 0 ? ([["Ceiling past the balance (overage)", `${formatCompute(quote.money.ceilingOverageMs)} at ${formatTenthsOfCent(quote.money.overageTenthsOfCentPerMinute)}/min`]] as [string, string][]) : []),
        ["Balance now", formatCompute(quote.balanceMs)],
        ["Balance after (expected)", formatCompute(quote.balanceAfterMs)],
        ["Limit: cells per sweep", quote.limits.maxCells.toLocaleString("en")],
        ["Limit: steps per cell", quote.limits.maxStepsPerCell.toLocaleString("en")],
        ["Limit: bodies per scene", quote.limits.maxBodies.toLocaleString("en")],
        ["Limit: compute this month", `${formatMinutes(quote.limits.monthUsedMs)} used of ${formatMinutes(quote.limits.monthlyComputeMs)}`],
        ["Compute left this month", formatMinutes(quote.limits.monthRemainingMs)],
        ["Limit: sweeps at once", `${quote.limits.runningSweeps} running of ${quote.limits.maxRunningSweeps} (more wait in the queue)`],
      ]
    : [];
  return (
    <Card title="Quote">
      <div aria-live="polite" data-testid="quote-panel">
        {error && !quote ? <p className="text-sm text-danger">{error}</p> : null}
        {quote ? (
          <dl className={cx("grid grid-cols-[1fr_auto] gap-x-4 gap-y-1 text-sm", pending && "opacity-60")}>
            {rows.map(([label, value]) => (
              <div key={label} className="contents">
                <dt className="text-ink-muted">{label}</dt>
                <dd className="text-right font-mono" data-testid={`quote-${label.toLowerCase().replace(/[^a-z]+/g, "-")}`}>
                  {value}
                </dd>
              </div>
            ))}
          </dl>
        ) : !error ? (
          <p className="text-sm text-ink-muted">Asking for a quote…</p>
        ) : null}
        {quote && error ? <p className="mt-2 text-sm text-danger">{error}</p> : null}
        {quote?.warnings.map((warning) => (
          <p key={warning} className="mt-2 text-sm text-ink">
            {warning}
          </p>
        ))}
        <p className="mt-3 text-xs text-ink-muted">
          Compute is billed in milliseconds from the work units the engine counts for each cell ({WORK_UNITS_PER_BILLED_MS.toLocaleString("en")} units a millisecond): the same sweep always costs the same, and never more than its ceiling. Cached cells cost nothing. Prices are before tax.
        </p>
      </div>
    </Card>
  );
}
