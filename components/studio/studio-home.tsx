"use client";
/**
 * The studio home (Overview tab): where things stand, per role. Compute against the month's cap with
 * its daily trend, sweeps running now, the latest results with their verdicts as a small bar,
 * catalogue checks with their pairs at risk, the next invoice for owners and finance, members and
 * tokens for owners. Every card leads to its page; an empty card says what starts it.
 */
import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import { Bar, BarChart, ResponsiveContainer, Tooltip, XAxis } from "recharts";
import { Alert, ButtonLink, Card, EmptyState, LoadingRows, RoleBadge } from "@/components/ui";
import { InvitesTable, MembersTable, TokensTable } from "@/components/studio/studio-tables";
import { StudioShell } from "@/components/studio/studio-shell";
import { ResultsCaution } from "@/components/help/verdict-help";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import { VERDICTS } from "@/lib/physics/types";
import { formatMinutes } from "@/lib/billing/format";
import { formatPriceCents } from "@/lib/billing/packs";
import type { OverviewSweep, StudioOverview } from "@/lib/studios/overview";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate, formatDateTime } from "@/lib/ui/format";
import { studioApiPath, useInvites, useMembers, useTokens, seededBy } from "@/lib/ui/queries";
import type { StudioRole } from "@/lib/ui/types";
import { formatNumber } from "@/lib/ui/units";

/** A 403 from a list means "your role does not show this", which is normal for non-owners. */
function ownerOnlyNotice(error: unknown, what: string) {
  if (error instanceof ApiClientError && error.status === 403) {
    return <p className="text-sm text-ink-muted">Only owners of the studio see {what}.</p>;
  }
  return <Alert>{errorMessage(error)}</Alert>;
}

const cardLink = "text-sm font-medium text-action hover:underline";

function Meter({ value, max, label, testId }: { value: number; max: number; label: string; testId?: string }) {
  const percent = max > 0 ? Math.min(100, (value / max) * 100) : 0;
  return (
    <div role="meter" aria-label={label} aria-valuemin={0} aria-valuemax={max} aria-valuenow={value} data-testid={testId} className="h-2 w-full overflow-hidden rounded-full bg-surface-muted">
      <div className="h-full rounded-full bg-action" style={{ width: `${percent}%` }} />
    </div>
  );
}

/** The verdict counts of a sweep as one stacked bar, in the order of VERDICTS, with a text twin for screen readers. */
export function VerdictBar({ counts, total }: { counts: OverviewSweep["verdictCounts"]; total: number }) {
  const parts = VERDICTS.map((verdict) => ({ verdict, n: (counts as Record<string, number>)[verdict] ?? 0 })).filter((part) => part.n > 0);
  const sum = Math.max(total, parts.reduce((acc, part) => acc + part.n, 0), 1);
  const text = parts.map((part) => `${VERDICT_STYLES[part.verdict]?.label ?? part.verdict} ${part.n}`).join(", ");
  return (
    <div>
      <div className="flex h-2.5 w-full overflow-hidden rounded-sm border border-line" role="img" aria-label={text || "no cells yet"} data-testid="verdict-bar">
        {parts.map((part) => (
          <span key={part.verdict} title={`${VERDICT_STYLES[part.verdict]?.label ?? part.verdict}: ${part.n}`} style={{ width: `${(part.n / sum) * 100}%`, background: VERDICT_STYLES[part.verdict]?.colour ?? "#999" }} />
        ))}
      </div>
      <p className="mt-1 text-xs text-ink-muted">{text || "no cells yet"}</p>
    </div>
  );
}

function ComputeCard({ studioId, overview, role }: { studioId: string; overview: StudioOverview; role: StudioRole | null }) {
  const { compute } = overview;
  const money = role === "owner" || role === "finance";
  const cap = compute.month.capMs;
  const trend = compute.trend.map((day) => ({ day: day.day.slice(5), minutes: Number((day.usedMs / 60_000).toFixed(2)) }));
  const hasTrend = compute.trend.some((day) => day.usedMs > 0);
  const change = compute.previousMonthUsedMs > 0 ? (compute.month.usedMs - compute.previousMonthUsedMs) / compute.previousMonthUsedMs : null;
  return (
    <Card title="Compute" actions={<Link className={cardLink} href={money ? `/studios/${studioId}/billing` : `/studios/${studioId}/sweeps`}>{money ? "Billing and usage →" : "Sweeps →"}</Link>} className="lg:col-span-2">
      <dl className="grid grid-cols-2 gap-4 text-sm sm:grid-cols-3" data-testid="home-compute">
        <div>
          <dt className="text-ink-muted">Balance</dt>
          <dd className="font-mono text-xl" data-testid="home-balance">{formatMinutes(compute.balanceMs)} min</dd>
        </div>
        <div>
          <dt className="text-ink-muted">Used in {compute.month.key}</dt>
          <dd className="font-mono text-xl" data-testid="home-month-used">{formatMinutes(compute.month.usedMs)} min</dd>
        </div>
        <div className="col-span-2 sm:col-span-1">
          <dt className="text-ink-muted">Last month</dt>
          <dd className="font-mono text-xl">
            {formatMinutes(compute.previousMonthUsedMs)} min
            {change !== null ? <span className="ml-2 text-xs text-ink-muted">({change >= 0 ? "+" : "−"}{formatNumber(Math.abs(change) * 100, 2)} % this month so far)</span> : null}
          </dd>
        </div>
      </dl>
      {cap !== null ? (
        <div className="mt-4 space-y-1">
          <Meter value={compute.month.usedMs} max={cap} label={`Compute used this month against the cap of ${formatMinutes(cap)} minutes`} testId="home-cap-meter" />
          <p className="text-xs text-ink-muted">
            {formatMinutes(compute.month.usedMs)} of {formatMinutes(cap)} min this month ({formatNumber((compute.month.usedMs / Math.max(cap, 1)) * 100, 2)} % of the cap)
            {compute.month.overageMs > 0 ? `, ${formatMinutes(compute.month.overageMs)} min of it overage` : ""}
          </p>
        </div>
      ) : null}
      <div className="mt-4 h-28" data-testid="home-trend" aria-label={`Compute per day over the last ${compute.trend.length} days`}>
        {hasTrend ? (
          <ResponsiveContainer width="100%" height="100%">
            <BarChart data={trend} margin={{ top: 4, right: 0, bottom: 0, left: 0 }}>
              <XAxis dataKey="day" tick={{ fontSize: 10 }} interval={6} tickLine={false} />
              <Tooltip formatter={(value) => [`${value} min`, "compute"]} />
              <Bar dataKey="minutes" fill="var(--kd-action)" isAnimationActive={false} />
            </BarChart>
          </ResponsiveContainer>
        ) : (
          <EmptyState>No compute used in the last {compute.trend.length} days. A template sweep takes a few seconds.</EmptyState>
        )}
      </div>
    </Card>
  );
}

function RunningCard({ studioId, sweeps, canRun }: { studioId: string; sweeps: OverviewSweep[]; canRun: boolean }) {
  return (
    <Card title="Running now" actions={<Link className={cardLink} href={`/studios/${studioId}/sweeps`}>All sweeps →</Link>}>
      {sweeps.length === 0 ? (
        <EmptyState>
          Nothing running.{" "}
          {canRun ? (
            <Link className="text-action hover:underline" href={`/studios/${studioId}/sweeps/new`}>
              Start a sweep from a template
            </Link>
          ) : (
            "Engineers and owners start sweeps."
          )}
        </EmptyState>
      ) : (
        <ul className="space-y-3" data-testid="home-running">
          {sweeps.map((sweep) => (
            <li key={sweep.id} data-testid="home-running-item">
              <Link href={`/studios/${studioId}/sweeps/${sweep.id}`} className="block text-sm font-medium hover:underline">
                {sweep.name}
              </Link>
              <Meter value={sweep.cellsDone} max={sweep.cells} label={`${sweep.name}: ${sweep.cellsDone} of ${sweep.cells} cells done`} />
              <p className="text-xs text-ink-muted" data-testid="home-running-progress">
                {sweep.status} · {sweep.cellsDone.toLocaleString("en")} / {sweep.cells.toLocaleString("en")} cells
                {sweep.reason ? <span data-testid="home-running-reason"> · {sweep.reason}</span> : null}
              </p>
            </li>
          ))}
        </ul>
      )}
    </Card>
  );
}

function LatestCard({ studioId, sweeps, canRun }: { studioId: string; sweeps: OverviewSweep[]; canRun: boolean }) {
  return (
    <Card title="Latest results" className="lg:col-span-2" actions={<Link className={cardLink} href={`/studios/${studioId}/sweeps`}>All sweeps →</Link>}>
      {sweeps.length === 0 ? (
        <EmptyState>
          No finished sweep yet.{" "}
          {canRun ? (
            <Link className="text-action hover:underline" href={`/studios/${studioId}/sweeps/new?template=frame-rate-stiffness`}>
              Run “Stiffness a frame rate can carry”
            </Link>
          ) : null}{" "}
          — its map shows where each integrator holds at 30, 60 and 120 Hz.
        </EmptyState>
      ) : (
        <ul className="divide-y divide-line" data-testid="home-latest">
          {sweeps.map((sweep) => (
            <li key={sweep.id} className="grid gap-2 py-3 sm:grid-cols-[minmax(0,1fr)_14rem] sm:items-center" data-testid="home-latest-item">
              <div className="min-w-0">
                <Link href={`/studios/${studioId}/sweeps/${sweep.id}`} className="block truncate text-sm font-medium text-action hover:underline" data-testid="home-latest-link">
                  {sweep.name}
                </Link>
                <p className="text-xs text-ink-muted">
                  {sweep.cells.toLocaleString("en")} cells · finished {formatDateTime(sweep.finishedAt)}
                </p>
              </div>
              <VerdictBar counts={sweep.verdictCounts} total={sweep.cells} />
            </li>
          ))}
        </ul>
      )}
    </Card>
  );
}

function ChecksCard({ studioId, overview, canRun }: { studioId: string; overview: StudioOverview; canRun: boolean }) {
  return (
    <Card title="Catalogue checks" actions={<Link className={cardLink} href={`/studios/${studioId}/catalogues`}>Catalogues →</Link>}>
      {overview.checks.length === 0 ? (
        <EmptyState>
          {overview.counts.catalogues === 0 ? "No catalogue yet. " : "No check run yet. "}
          <Link className="text-action hover:underline" href={`/studios/${studioId}/catalogues`}>
            {overview.counts.catalogues === 0 ? "Upload your game's object list" : canRun ? "Check a catalogue" : "Open the catalogues"}
          </Link>{" "}
          to find the pairs of objects that tunnel or explode at your frame rate.
        </EmptyState>
      ) : (
        <ul className="space-y-3" data-testid="home-checks">
          {overview.checks.map((check) => (
            <li key={check.id} className="text-sm">
              <Link href={`/studios/${studioId}/catalogues/${check.catalogueId}/checks/${check.id}`} className="font-medium text-action hover:underline">
                {check.catalogueName} v{check.catalogueVersion}
              </Link>
              <p className="text-xs text-ink-muted">{formatDate(check.createdAt)}</p>
              {check.pairsAtRisk === null ? (
                <p className="text-xs">{check.status}…</p>
              ) : check.pairsAtRisk.length === 0 ? (
                <p className="text-xs text-ok">All {check.pairs} pairs stable</p>
              ) : (
                <p className="text-xs text-danger" data-testid="home-pairs-at-risk">
                  {check.pairsAtRisk.length} of {check.pairs} pairs at risk: {check.pairsAtRisk.slice(0, 3).join("; ")}
                  {check.pairsAtRisk.length > 3 ? " …" : ""}
                </p>
              )}
            </li>
          ))}
        </ul>
      )}
    </Card>
  );
}

function InvoiceCard({ studioId, invoice }: { studioId: string; invoice: NonNullable<StudioOverview["nextInvoice"]> }) {
  return (
    <Card title="Next invoice" actions={<Link className={cardLink} href={`/studios/${studioId}/invoices`}>Invoices →</Link>}>
      <p className="font-mono text-2xl" data-testid="home-next-invoice">
        {formatPriceCents(invoice.runningTotalCents)}
      </p>
      <p className="mt-1 text-xs text-ink-muted">
        Overage of {invoice.periodKey} so far: {formatMinutes(invoice.overageMs)} min at {invoice.centsPerMinute} ¢ per minute, before tax. Prepaid minutes are not invoiced.
      </p>
      {invoice.lastInvoice ? (
        <p className="mt-2 text-sm">
          Last invoice:{" "}
          <Link className="text-action hover:underline" href={`/studios/${studioId}/invoices/${invoice.lastInvoice.id}`}>
            {invoice.lastInvoice.number ?? invoice.lastInvoice.id}
          </Link>{" "}
          · {formatPriceCents(invoice.lastInvoice.totalCents)} · period to {formatDate(invoice.lastInvoice.periodEnd)}
        </p>
      ) : (
        <p className="mt-2 text-sm text-ink-muted">No invoice yet: invoices come only for overage.</p>
      )}
    </Card>
  );
}

function StartHere({ studioId, role }: { studioId: string; role: StudioRole | null }) {
  const steps: { title: string; text: string; href: string; action: string; roles: (StudioRole | null)[] }[] = [
    { title: "Run a template", text: "Three questions physics programmers ask, answered in seconds: a stiffness per frame rate, tunnelling speed, mass ratio.", href: `/studios/${studioId}/sweeps/new?template=frame-rate-stiffness`, action: "Open the builder", roles: ["owner", "engineer"] },
    { title: "Upload a catalogue", text: "Your game's objects as CSV or JSON; a check finds the pairs at risk at your frame rate.", href: `/studios/${studioId}/catalogues`, action: "Upload a catalogue", roles: ["owner", "engineer"] },
    { title: "Invite the team", text: "Engineers run sweeps, finance reads invoices, owners manage both.", href: `/studios/${studioId}/members`, action: "Invite people", roles: ["owner"] },
    { title: "Buy minutes", text: "Packs of compute minutes; only the compute used is debited.", href: `/studios/${studioId}/billing`, action: "See the packs", roles: ["owner", "finance"] },
  ];
  const mine = steps.filter((step) => step.roles.includes(role));
  if (mine.length === 0) return null;
  return (
    <Card title="Start here" className="lg:col-span-3">
      <ol className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4" data-testid="start-here">
        {mine.map((step, i) => (
          <li key={step.title} className="rounded-md border border-line p-4">
            <p className="font-mono text-xs text-kick">{i + 1}</p>
            <h3 className="font-semibold">{step.title}</h3>
            <p className="mt-1 text-sm text-ink-muted">{step.text}</p>
            <ButtonLink href={step.href} variant="secondary" className="mt-3">
              {step.action}
            </ButtonLink>
          </li>
        ))}
      </ol>
    </Card>
  );
}

export function StudioHome({ studioId, studioName, role, initialOverview }: { studioId: string; studioName: string; role: StudioRole | null; initialOverview?: StudioOverview }) {
  const overview = useQuery({
    queryKey: ["studio", studioId, "overview"],
    queryFn: async () => (await apiFetch<{ overview: StudioOverview }>(`${studioApiPath(studioId)}/overview`)).overview,
    // Running sweeps move: the card follows them while any is running.
    refetchInterval: (query) => ((query.state.data?.running.length ?? 0) > 0 ? 3000 : false),
    // The server page's copy of the same answer: the cards paint with the page (see lib/ui/queries.ts).
    ...seededBy(initialOverview),
  });
  const members = useMembers(studioId);
  const isOwner = role === "owner";
  // Invitations and tokens are listed to owners only (the API answers 403 to everyone else).
  const invites = useInvites(studioId, isOwner);
  const tokens = useTokens(studioId, isOwner);
  const pendingInvites = invites.data ?? [];
  const canRun = role === "owner" || role === "engineer";
  const data = overview.data;
  const empty = data ? data.counts.sweeps === 0 && data.counts.catalogues === 0 : false;

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-3" data-testid="studio-home">
        {overview.isPending ? (
          <Card className="lg:col-span-3">
            <LoadingRows label="the studio" />
          </Card>
        ) : overview.isError ? (
          <div className="lg:col-span-3">
            <Alert>{errorMessage(overview.error)}</Alert>
          </div>
        ) : data ? (
          <>
            {empty ? <StartHere studioId={studioId} role={role} /> : null}
            <ComputeCard studioId={studioId} overview={data} role={role} />
            {data.nextInvoice ? <InvoiceCard studioId={studioId} invoice={data.nextInvoice} /> : <RunningCard studioId={studioId} sweeps={data.running} canRun={canRun} />}
            <LatestCard studioId={studioId} sweeps={data.latest} canRun={canRun} />
            {data.nextInvoice ? <RunningCard studioId={studioId} sweeps={data.running} canRun={canRun} /> : <ChecksCard studioId={studioId} overview={data} canRun={canRun} />}
            {data.nextInvoice ? <ChecksCard studioId={studioId} overview={data} canRun={canRun} /> : null}
          </>
        ) : null}
        <Card
          title={`Members and roles${members.data ? ` (${members.data.length})` : ""}`}
          className="lg:col-span-2"
          actions={isOwner ? <ButtonLink href={`/studios/${studioId}/members`} variant="secondary">Manage members</ButtonLink> : role ? <RoleBadge role={role} /> : null}
        >
          {members.isPending ? <LoadingRows label="members" /> : members.isError ? <Alert>{errorMessage(members.error)}</Alert> : <MembersTable members={members.data} />}
        </Card>
        <Card title="What the numbers are for">
          <ResultsCaution />
        </Card>
        {isOwner ? (
          <>
            <Card title="Pending invitations" className="lg:col-span-3">
              {invites.isPending ? (
                <LoadingRows label="invitations" />
              ) : invites.isError ? (
                ownerOnlyNotice(invites.error, "pending invitations")
              ) : pendingInvites.length === 0 ? (
                <EmptyState>No invitations waiting. Invite a colleague from Members.</EmptyState>
              ) : (
                <InvitesTable invites={pendingInvites} />
              )}
            </Card>
            <Card title="API tokens" className="lg:col-span-3" actions={<ButtonLink href={`/studios/${studioId}/tokens`} variant="secondary">Manage tokens</ButtonLink>}>
              {tokens.isPending ? (
                <LoadingRows label="tokens" />
              ) : tokens.isError ? (
                ownerOnlyNotice(tokens.error, "API tokens")
              ) : tokens.data.length === 0 ? (
                <EmptyState>No API tokens. Tokens let a build script or CI job call the Kickdrift API for this studio.</EmptyState>
              ) : (
                <TokensTable tokens={tokens.data} />
              )}
            </Card>
          </>
        ) : null}
      </div>
    </StudioShell>
  );
}
