"use client";
import { formatFrameRate, formatFrameStep, formatSI } from "@/lib/ui/units";
/**
 * A catalogue check's result: the pair matrix (objects × objects, each square coloured by the
 * pair's worst verdict), the summary of pairs at risk with the recommendation and its confirmation
 * by simulation, the selected pair's stability map (closing speed × impact offset), and exports.
 */
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { useEffect, useMemo, useRef, useState } from "react";
import { StabilityMap, VerdictSymbol } from "@/components/maps";
import { Alert, Button, Card, LoadingRows, buttonClasses, cx } from "@/components/ui";
import { DataTable, type Column } from "@/components/data-table";
import { StudioShell } from "@/components/studio/studio-shell";
import { StatusBadge, progressPercent } from "@/components/sweeps/sweeps-list";
import { isActive, sweepsPath, type CellRow, type Quote } from "@/components/sweeps/sweep-api";
import { VERDICT_STYLES } from "@/lib/charts/categories";
import type { Advice, PairSummary } from "@/lib/catalogues/check";
import type { FrictionCheck } from "@/lib/catalogues/friction-check";
import type { Verdict } from "@/lib/physics/types";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import type { StudioRole } from "@/lib/ui/types";
import { catalogueKeys, cataloguePath, checkPath, type CheckView as CheckViewData } from "./catalogue-api";

const VERDICT_WORDS: Record<Verdict, string> = {
  stable: "stable",
  "coarse-contact": "coarse contact (too few steps)",
  "energy-drift": "energy drift",
  "restitution-off": "restitution off target",
  "deep-overlap": "deep overlap (sinks)",
  tunneled: "tunnels",
  "step-unstable": "step unstable",
  exploded: "explodes",
  jitter: "jitters (never comes to rest)",
  creep: "creeps (slides where friction should hold)",
  sinking: "sinks into its support at rest",
};

function fmt(value: number | null, digits = 3): string {
  if (value === null || !Number.isFinite(value)) return "—";
  return Number(value.toPrecision(digits)).toLocaleString("en", { maximumSignificantDigits: digits });
}

export function CheckView({ studioId, studioName, role, catalogueId, checkId }: { studioId: string; studioName: string; role: StudioRole; catalogueId: string; checkId: string }) {
  const canWrite = role === "owner" || role === "engineer";
  const [selected, setSelected] = useState<string | null>(null);
  // Bumped by every "open" from the summary, so opening the same pair again scrolls again.
  const [openRequest, setOpenRequest] = useState(0);
  const detailRef = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (openRequest === 0 || !detailRef.current) return;
    // The pair's panel sits below the matrix: bring it into view and move focus there for keyboard users.
    detailRef.current.scrollIntoView({ block: "start", behavior: "smooth" });
    detailRef.current.focus({ preventScroll: true });
  }, [openRequest]);
  const openPair = (name: string) => {
    setSelected(name);
    setOpenRequest((count) => count + 1);
  };
  const check = useQuery({
    queryKey: catalogueKeys.check(studioId, catalogueId, checkId),
    queryFn: async () => (await apiFetch<{ check: CheckViewData }>(checkPath(studioId, catalogueId, checkId))).check,
    refetchInterval: (query) => {
      const data = query.state.data;
      return data && (isActive(data.sweep.status) || data.confirmation?.status === "running") ? 1500 : false;
    },
  });
  const data = check.data;
  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      {check.isPending ? (
        <LoadingRows label="check" />
      ) : check.isError ? (
        <Alert>{errorMessage(check.error)}</Alert>
      ) : data ? (
        <div className="space-y-6">
          <Card
            title={
              <span>
                Catalogue check of{" "}
                <Link href={`/studios/${studioId}/catalogues/${catalogueId}`} className="text-action hover:underline">
                  {data.catalogue.name} v{data.catalogue.version}
                </Link>
              </span>
            }
            actions={<StatusBadge status={data.sweep.status} />}
          >
            <p className="text-sm text-ink-muted">
              {formatFrameRate(data.settings.dtS)} ({formatFrameStep(data.settings.dtS)}) × {data.settings.substeps} substeps (h = {formatSI(data.settings.dtS / data.settings.substeps, "s")}), {data.settings.integrator}, {data.settings.contactModel} contact
              {data.settings.stiffness !== undefined ? `, stiffness ${fmt(data.settings.stiffness, 4)} ${data.settings.contactModel === "linear" ? "N/m" : "N/m^1.5"}` : ""}
              {data.settings.groupStiffness ? " (per group)" : ""}, damping {data.settings.damping === "catalogue" ? "from the catalogue's restitution" : "none"}; run as{" "}
              <Link href={`/studios/${studioId}/sweeps/${data.sweep.id}`} className="text-action hover:underline">
                sweep {data.sweep.id.slice(0, 12)}
              </Link>{" "}
              ({data.sweep.cellsDone.toLocaleString("en")} / {data.sweep.cells.toLocaleString("en")} cells, {progressPercent(data.sweep)} %).
            </p>
            {data.sweep.reason ? <Alert>{data.sweep.reason}</Alert> : null}
          </Card>
          <Summary data={data} onOpen={openPair} canWrite={canWrite} studioId={studioId} catalogueId={catalogueId} />
          {data.recommendation.friction ? <FrictionPanel friction={data.recommendation.friction} margin={data.recommendation.margin} substepS={data.settings.dtS / data.settings.substeps} simulated={pairsCarryFriction(data.sweep.spec.axes)} /> : null}
          <Card title="Pair matrix">
            <PairMatrixGrid data={data} selected={selected} onSelect={setSelected} />
          </Card>
          <div ref={detailRef} tabIndex={-1} className="scroll-mt-4 outline-none" data-testid="pair-detail-anchor">
            {selected ? <PairDetail studioId={studioId} data={data} pairName={selected} /> : null}
          </div>
          <Card title="Exports">
            <div className="flex flex-wrap gap-3">
              <a className={buttonClasses("secondary")} href={`${checkPath(studioId, catalogueId, checkId)}/export?format=csv&table=pairs`} download data-testid="export-pairs-csv">
                Pair matrix (CSV)
              </a>
              <a className={buttonClasses("secondary")} href={`${checkPath(studioId, catalogueId, checkId)}/export?format=csv&table=recommendation`} download>
                Recommendation (CSV)
              </a>
              <a className={buttonClasses("secondary")} href={`${checkPath(studioId, catalogueId, checkId)}/export?format=json`} download>
                Matrix and recommendation (JSON)
              </a>
              {data.recommendation.friction ? (
                <a className={buttonClasses("secondary")} href={`${checkPath(studioId, catalogueId, checkId)}/export?format=csv&table=friction`} download data-testid="export-friction-csv">
                  Friction, resting and sliding (CSV)
                </a>
              ) : null}
            </div>
          </Card>
        </div>
      ) : null}
    </StudioShell>
  );
}

function Summary({ data, onOpen, canWrite, studioId, catalogueId }: { data: CheckViewData; onOpen: (name: string) => void; canWrite: boolean; studioId: string; catalogueId: string }) {
  const { matrix, recommendation, confirmation } = data;
  const queryClient = useQueryClient();
  const [confirmError, setConfirmError] = useState<string | null>(null);
  const [confirming, setConfirming] = useState(false);
  const unit = data.settings.contactModel === "linear" ? "N/m" : "N/m^1.5";

  async function confirm() {
    if (!confirmation) return;
    setConfirming(true);
    setConfirmError(null);
    try {
      const { quote } = await apiFetch<{ quote: Quote }>(`${cataloguePath(studioId, catalogueId)}/quote`, { method: "POST", body: { settings: confirmation.settings } });
      await apiFetch(`${cataloguePath(studioId, catalogueId)}/checks`, { method: "POST", body: { settings: confirmation.settings, acceptedQuoteMs: quote.ceilingMs } });
      await queryClient.invalidateQueries({ queryKey: catalogueKeys.check(studioId, catalogueId, data.id) });
    } catch (error) {
      setConfirmError(errorMessage(error));
    } finally {
      setConfirming(false);
    }
  }

  return (
    <Card title="Summary">
      <div className="space-y-4 text-sm" data-testid="check-summary">
        {!matrix.complete ? <p className="text-ink-muted">The matrix fills as the cells finish.</p> : null}
        {matrix.atRisk.length === 0 ? (
          matrix.complete ? (
            <Alert tone="ok">Every pair stays stable up to its closing speed at every offset.</Alert>
          ) : null
        ) : (
          <div>
            <p>
              <strong>{matrix.atRisk.length}</strong> of {matrix.pairs.length} pairs are at risk{matrix.riskiest ? (
                <>
                  ; the riskiest is <strong>{matrix.riskiest}</strong>.
                </>
              ) : "."}
            </p>
            {matrix.riskiest ? (
              <Button className="mt-2" onClick={() => onOpen(matrix.riskiest as string)} data-testid="open-riskiest">
                Open the riskiest pair
              </Button>
            ) : null}
            <ul className="mt-2 flex flex-wrap gap-2" aria-label="Pairs at risk">
              {matrix.atRisk.map((name) => {
                const pair = matrix.pairs.find((candidate) => candidate.name === name) as PairSummary;
                return (
                  <li key={name}>
                    <button type="button" onClick={() => onOpen(name)} className="rounded-full border border-line px-2 py-0.5 text-xs hover:bg-surface-muted">
                      {name}: {VERDICT_WORDS[pair.worstVerdict as Verdict]}
                    </button>
                  </li>
                );
              })}
            </ul>
          </div>
        )}
        <div className="rounded-md border border-line p-3" data-testid="recommendation">
          <p className="font-semibold">
            Recommendation (margin {formatPercentValue(recommendation.margin)}: ω·h ≤ {fmt(2 * (1 - recommendation.margin))})
          </p>
          <AdviceBlock advice={recommendation.advice} />
          <p className="mt-2">
            Lightest reduced mass: {fmt(recommendation.lightestReducedMassKg)} kg ({recommendation.lightestPair}).
          </p>
          {recommendation.stiffness !== null ? (
            <p className="mt-1">
              Largest single stiffness at your {data.settings.substeps} substeps:{" "}
              <strong data-testid="recommended-stiffness">
                {fmt(recommendation.stiffness, 4)} {unit}
              </strong>
            </p>
          ) : null}
          {recommendation.substeps !== null ? (
            <p className="mt-1">
              Smallest substep count at your own stiffness: <strong>{recommendation.substeps}</strong>
            </p>
          ) : null}
          <p className="mt-1 text-xs text-ink-muted">
            From the bound ω·h &lt; 2 of symplectic Euler and velocity Verlet on a linear spring, with ω = √(k/m*) and h = dt / substeps; a stiffness also needs every pair to stay within the overlap tolerance and clear of tunnelling.
          </p>
          {confirmation ? (
            <div className="mt-2" data-testid="confirmation">
              {confirmation.status === "confirmed" ? (
                <Alert tone="ok">
                  Confirmed by simulation:{" "}
                  <Link className="underline" href={`/studios/${studioId}/catalogues/${catalogueId}/checks/${confirmation.checkId}`}>
                    the check at {fmt(confirmation.settings.stiffness ?? null, 4)} {unit}
                  </Link>{" "}
                  keeps every pair stable.
                  {confirmation.pairsOffTarget.length > 0
                    ? ` Stable but not accurate there: ${confirmation.pairsOffTarget.join(", ")} (rebound off the target or too few steps per contact; more substeps improve them).`
                    : ""}
                </Alert>
              ) : confirmation.status === "refuted" ? (
                <Alert>
                  Not confirmed: at the recommended stiffness {confirmation.pairsAtRisk.join(", ")} still fail (
                  <Link className="underline" href={`/studios/${studioId}/catalogues/${catalogueId}/checks/${confirmation.checkId}`}>
                    see that check
                  </Link>
                  ).
                </Alert>
              ) : confirmation.status === "running" ? (
                <p className="text-ink-muted">Confirmation by simulation is running…</p>
              ) : canWrite ? (
                <Button variant="secondary" onClick={() => void confirm()} disabled={confirming}>
                  {confirming ? "Submitting…" : `Confirm by simulation (a check at ${fmt(confirmation.settings.stiffness ?? null, 4)} ${unit}, ${confirmation.settings.substeps} substeps)`}
                </Button>
              ) : (
                <p className="text-ink-muted">Not yet confirmed by simulation.</p>
              )}
              {confirmError ? <Alert>{confirmError}</Alert> : null}
            </div>
          ) : null}
        </div>
      </div>
    </Card>
  );
}

function yesNo(value: boolean | null, yes: string, no: string): string {
  return value === null ? "—" : value ? yes : no;
}

/** Whether the check's pair cells ran with friction: checks from before that carry no μ on their pair axis. */
function pairsCarryFriction(axes: readonly { pairs?: readonly { friction?: number; rollingResistance?: number }[] }[]): boolean {
  return axes.some((axis) => axis.pairs?.some((pair) => pair.friction !== undefined || pair.rollingResistance !== undefined) ?? false);
}

type FrictionRow = FrictionCheck["contacts"][number];

/** Whether a contact has a tangential spring at all (a positive friction coefficient). */
function hasSpring(row: FrictionRow): boolean {
  return row.frictionCoefficient !== null && row.frictionCoefficient > 0;
}

/** The per-contact table's columns; `phase` is the ω·h bound the tangential spring is held to. */
function frictionColumns(phase: number): Column<FrictionRow>[] {
  return [
    { key: "contact", header: "Contact", rowHeader: true, cell: (row) => row.contact },
    { key: "mu", header: "μ", numeric: true, cell: (row) => fmt(row.frictionCoefficient) },
    { key: "muR", header: "μ_r", numeric: true, cell: (row) => fmt(row.rollingResistance) },
    {
      key: "omegaH",
      header: `ω_t·h (≤ ${fmt(phase)})`,
      numeric: true,
      className: (row) => hasSpring(row) && !row.tangentialStable && "font-semibold",
      cell: (row) => (hasSpring(row) ? `${fmt(row.tangentialOmegaH)} ${row.tangentialStable ? "within" : "past the bound"}` : "no spring"),
    },
    { key: "ratio", header: "largest k_t/k", numeric: true, cell: (row) => (hasSpring(row) ? fmt(row.largestStiffnessRatio) : "—") },
    {
      key: "resting",
      header: "resting overlap (allowed)",
      numeric: true,
      className: (row) => !row.restingWithinTolerance && "font-semibold",
      cell: (row) => `${formatSI(row.restingOverlapM, "m")} (${formatSI(row.allowedRestingOverlapM, "m")})${row.restingWithinTolerance ? "" : " sinks"}`,
    },
    {
      key: "sliding",
      header: "slides above (rolls without slip up to)",
      numeric: true,
      cell: (row) => (row.slidingAngleDeg === null ? "—" : `${fmt(row.slidingAngleDeg)}° (${fmt(row.rollingSlipAngleDeg)}°)`),
    },
    { key: "slope", header: "on your slope", numeric: true, cell: (row) => yesNo(row.holdsOnSlope, "holds", "slides") },
    {
      key: "topSpeed",
      header: "from top speed: slides, then rolls",
      numeric: true,
      cell: (row) =>
        row.slideTimeS === null
          ? "—"
          : `${formatSI(row.slideTimeS, "s")} over ${formatSI(row.slideDistanceM as number, "m")}, then ${fmt(row.rollingSpeedMPerS)} m/s${row.rollingDistanceM !== null ? ` for ${formatSI(row.rollingDistanceM, "m")}` : ""}`,
    },
  ];
}

/**
 * Friction, resting and sliding (catalogues whose objects give μ or μ_r): the tangential springs'
 * ω_t·h against the bound, the largest k_t/k and the substeps that keep every pair stable, each
 * contact's resting overlap m·g/k, and on the floor the sliding angles and the slide before rolling.
 */
function FrictionPanel({ friction, margin, substepS, simulated }: { friction: FrictionCheck; margin: number; substepS: number; simulated: boolean }) {
  const phase = 2 * (1 - margin);
  return (
    <Card title="Friction, resting and sliding">
      <div className="space-y-3 text-sm" data-testid="friction-check">
        <div className={cx("rounded-md border p-3", friction.unstableContacts.length === 0 && friction.sinkingContacts.length === 0 ? "border-line" : "border-action")}>
          <p className="font-semibold" data-testid="friction-summary">
            {friction.summary}
          </p>
          <ul className="mt-2 list-disc space-y-1 pl-5">
            {friction.details.map((line) => (
              <li key={line}>{line}</li>
            ))}
          </ul>
        </div>
        <p>
          Largest k_t/k at your substeps:{" "}
          <strong data-testid="friction-largest-ratio">{friction.largestStiffnessRatio === null ? "— (no contact has a friction coefficient)" : fmt(friction.largestStiffnessRatio)}</strong>
          {friction.largestStiffnessRatioContact ? ` (${friction.largestStiffnessRatioContact} decides)` : ""}. Substeps that keep every pair stable at k_t/k = {fmt(friction.stiffnessRatio)}
          {friction.stiffnessRatioGiven ? "" : " (the default, 2/7)"}: <strong data-testid="friction-substeps">{friction.substeps ?? "—"}</strong>.
        </p>
        <DataTable
          label="Friction, resting and sliding per contact"
          size="xs"
          scroll
          rows={friction.contacts}
          rowKey={(row) => row.contact}
          rowProps={(row) => ({ testId: "friction-row", data: { "data-contact": row.contact } })}
          columns={frictionColumns(phase)}
        />
        <p className="text-xs text-ink-muted">
          Worked out in closed form at h = {formatSI(substepS, "s")}.{" "}
          {simulated
            ? "The check's pair cells also run with friction: each pair at its μ (√(μ_A·μ_B) when both objects give one, common practice) and μ_r (the larger given), with this k_t/k, so the matrix above shows where the tangential spring fails in simulation too."
            : "This check's pair cells ran without friction (it was run before checks simulated friction): run the check again to see friction in the matrix."}{" "}
          The tangential spring k_t = (k_t/k)·k acts on the tangential mass m/(1 + m·r²/I) of a solid disc and is held to ω_t·h ≤ {fmt(phase)} like the normal spring; resting
          overlap is m·g/k under gravity {fmt(friction.gravityMPerS2)} m/s² (the heavier object on the lighter for a pair); an object that cannot roll slides once tan θ &gt; μ, a rolling disc slips once tan θ &gt; 3μ.
        </p>
      </div>
    </Card>
  );
}

const ADVICE_HEADINGS: Record<Advice["kind"], string> = {
  keep: "Your settings hold",
  stiffness: "Change the stiffness",
  substeps: "Raise the substeps and set the stiffness",
  groups: "Split the stiffness by group",
  objects: "Some pairs cannot be made stable at this frame rate",
};

/** The check's answer: what to do, or what cannot work and why, with the numbers. */
function AdviceBlock({ advice }: { advice: Advice }) {
  return (
    <div className={cx("mt-2 rounded-md border p-3", advice.kind === "keep" ? "border-line" : "border-action")} data-testid="advice" data-advice-kind={advice.kind}>
      <p className="text-xs font-semibold uppercase tracking-wide text-ink-muted">{ADVICE_HEADINGS[advice.kind]}</p>
      <p className="mt-1 font-semibold" data-testid="advice-summary">
        {advice.summary}
      </p>
      {advice.details.length > 0 ? (
        <ul className="mt-2 list-disc space-y-1 pl-5" data-testid="advice-details">
          {advice.details.map((line) => (
            <li key={line}>{line}</li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}

function formatPercentValue(fraction: number): string {
  return `${Number((fraction * 100).toPrecision(3))} %`;
}

function PairMatrixGrid({ data, selected, onSelect }: { data: CheckViewData; selected: string | null; onSelect: (name: string) => void }) {
  const { matrix } = data;
  const byIndex = useMemo(() => {
    const map = new Map<string, PairSummary>();
    for (const pair of matrix.pairs) {
      map.set(`${pair.i}:${pair.j}`, pair);
      map.set(`${pair.j}:${pair.i}`, pair);
    }
    return map;
  }, [matrix.pairs]);
  const size = matrix.objects.length;
  return (
    <div className="space-y-3">
      <div className="overflow-x-auto">
        <table className="border-separate border-spacing-1 text-xs" data-testid="pair-matrix">
          <caption className="sr-only">Worst verdict of each pair of objects; select a square to open the pair</caption>
          <thead>
            <tr>
              <td />
              {matrix.objects.map((name) => (
                <th key={name} scope="col" className="max-w-24 px-1 text-left align-bottom font-medium">
                  {name}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {matrix.objects.map((rowName, i) => (
              <tr key={rowName}>
                <th scope="row" className="pr-2 text-right font-medium">
                  {rowName}
                </th>
                {Array.from({ length: size }, (_, j) => {
                  const pair = byIndex.get(`${i}:${j}`) as PairSummary;
                  const verdict = pair.worstVerdict;
                  const label = `${pair.name}: ${verdict ? VERDICT_WORDS[verdict] : "not computed yet"}`;
                  return (
                    <td key={j} className="p-0">
                      <button
                        type="button"
                        onClick={() => onSelect(pair.name)}
                        aria-label={label}
                        title={label}
                        aria-pressed={selected === pair.name}
                        data-verdict={verdict ?? "pending"}
                        data-pair={pair.name}
                        className={cx("block h-9 w-9 overflow-hidden rounded border border-line", selected === pair.name && "ring-2 ring-ink ring-offset-1")}
                        style={{ backgroundColor: verdict ? VERDICT_STYLES[verdict].colour : "transparent" }}
                      >
                        {/* The verdict's glyph too, so the matrix reads without colour. */}
                        {verdict ? <VerdictSymbol verdict={verdict} size={34} className="block" /> : null}
                      </button>
                    </td>
                  );
                })}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <ul className="flex flex-wrap gap-3 text-xs" aria-label="Legend">
        {(Object.keys(VERDICT_STYLES) as Verdict[]).map((verdict) => (
          <li key={verdict} className="flex items-center gap-1">
            <VerdictSymbol verdict={verdict} size={16} />
            {VERDICT_STYLES[verdict].label}
          </li>
        ))}
      </ul>
    </div>
  );
}

function PairDetail({ studioId, data, pairName }: { studioId: string; data: CheckViewData; pairName: string }) {
  const router = useRouter();
  const pair = data.matrix.pairs.find((candidate) => candidate.name === pairName);
  const cells = useQuery({
    queryKey: ["catalogue-check-cells", data.sweep.id, data.sweep.cellsDone],
    queryFn: () => apiFetch<{ cells: CellRow[] }>(`${sweepsPath(studioId)}/${data.sweep.id}/cells`),
  });
  const map = useMemo(() => {
    if (!pair || !cells.data) return null;
    const fractions = Array.from({ length: data.settings.speedSteps }, (_, i) => (i + 1) / data.settings.speedSteps);
    const offsets = [...data.settings.offsets].sort((a, b) => a - b);
    const verdicts: (Verdict | null)[] = new Array(fractions.length * offsets.length).fill(null);
    const reasons: (string | null)[] = new Array(verdicts.length).fill(null);
    const indices: number[] = new Array(verdicts.length).fill(-1);
    for (const cell of cells.data.cells) {
      if (cell.axisValues[0] !== pairName) continue;
      const column = fractions.indexOf(cell.axisValues[1] as number);
      const row = offsets.indexOf(cell.axisValues[2] as number);
      if (column < 0 || row < 0) continue;
      const at = row * fractions.length + column;
      verdicts[at] = cell.verdict;
      reasons[at] = cell.reason;
      indices[at] = cell.index;
    }
    return {
      x: { label: "Closing speed", unit: "m/s", values: fractions.map((f) => f * pair.closingSpeedMPerS), spacing: "linear" as const },
      y: { label: "Impact offset", unit: "", values: offsets, spacing: "linear" as const },
      verdicts,
      reasons,
      indices,
    };
  }, [pair, cells.data, data.settings, pairName]);
  if (!pair) return null;
  return (
    <Card title={<span data-testid="pair-title">{pair.name}</span>}>
      <dl className="mb-4 grid gap-2 text-sm sm:grid-cols-3" data-testid="pair-detail">
        <div>
          <dt className="text-ink-muted">Worst verdict</dt>
          <dd className="font-semibold">{pair.worstVerdict ? VERDICT_WORDS[pair.worstVerdict] : "not computed yet"}</dd>
        </div>
        <div>
          <dt className="text-ink-muted">Highest stable closing speed</dt>
          <dd>
            {pair.highestStableSpeedMPerS === null ? "—" : `${fmt(pair.highestStableSpeedMPerS)} m/s`} of {fmt(pair.closingSpeedMPerS)} m/s
          </dd>
        </div>
        <div>
          <dt className="text-ink-muted">Margin to the bound (1 − ω·h/2)</dt>
          <dd className={pair.boundMargin < 0 ? "font-semibold text-danger" : undefined}>{formatPercentValue(pair.boundMargin)}</dd>
        </div>
        <div>
          <dt className="text-ink-muted">Stiffness</dt>
          <dd>{fmt(pair.stiffness, 4)}</dd>
        </div>
        <div className="sm:col-span-2">
          <dt className="text-ink-muted">Cells</dt>
          <dd>
            {(Object.keys(pair.counts) as Verdict[])
              .filter((verdict) => pair.counts[verdict] > 0)
              .map((verdict) => `${pair.counts[verdict]} ${VERDICT_WORDS[verdict]}`)
              .join(", ") || "none yet"}
          </dd>
        </div>
      </dl>
      {cells.isError ? <Alert>{errorMessage(cells.error)}</Alert> : null}
      {map ? (
        <StabilityMap
          x={map.x}
          y={map.y}
          layer={{ kind: "verdict", verdicts: map.verdicts }}
          verdicts={map.verdicts}
          reasons={map.reasons}
          title={`${pair.name}: verdict by closing speed and impact offset`}
          height={260}
          onCellClick={(index) => {
            const cellIndex = map.indices[index];
            if (cellIndex >= 0) router.push(`/studios/${studioId}/sweeps/${data.sweep.id}/cells/${cellIndex}`);
          }}
        />
      ) : (
        <LoadingRows label="pair cells" />
      )}
    </Card>
  );
}
