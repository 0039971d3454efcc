"use client";
import { formatFrameRate, formatFrameStep, parseFrameStep } from "@/lib/ui/units";
/**
 * One catalogue version: its objects, its versions and original file, its checks, and the form
 * that runs a check with the game's settings (quoted first, then queued like any sweep).
 */
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useQuery } from "@tanstack/react-query";
import { useMemo, useState, type ReactNode } from "react";
import { Alert, Button, Card, LoadingRows, SelectField, TextField, buttonClasses } from "@/components/ui";
import { DataTable, type Column } from "@/components/data-table";
import { StudioShell } from "@/components/studio/studio-shell";
import { StatusBadge } from "@/components/sweeps/sweeps-list";
import { formatMinutes, type Quote, type SweepStatus } from "@/components/sweeps/sweep-api";
import { formatCompute } from "@/lib/billing/format";
import { formatPriceCents } from "@/lib/billing/packs";
import { CATALOGUE_COLUMNS, type CatalogueColumn, type CatalogueObject } from "@/lib/catalogues/format";
import type { CheckSettingsInput } from "@/lib/catalogues/check";
import { apiFetch, ApiClientError, errorMessage } from "@/lib/ui/api";
import { formatDateTime } from "@/lib/ui/format";
import type { StudioRole } from "@/lib/ui/types";
import { catalogueKeys, cataloguePath, type CatalogueDetail, type CheckSummary, type CheckView } from "./catalogue-api";
import { seededBy } from "@/lib/ui/queries";

/** The objects of a version, one column per catalogue column, headed by its name in the file. */
const OBJECT_COLUMNS: Column<CatalogueObject>[] = CATALOGUE_COLUMNS.map((column) => {
  const value: Record<CatalogueColumn, (object: CatalogueObject) => ReactNode> = {
    name: (object) => object.name,
    mass_kg: (object) => object.massKg,
    radius_m: (object) => object.radiusM,
    top_speed_m_per_s: (object) => object.topSpeedMPerS,
    restitution: (object) => object.restitution,
    group: (object) => object.group ?? "—",
    friction: (object) => object.friction ?? "—",
    rolling_resistance: (object) => object.rollingResistance ?? "—",
  };
  return { key: column, header: column, cell: value[column], className: column === "name" ? "font-medium" : column === "group" ? undefined : "font-mono" };
});

interface FormState {
  /** The frame step as typed: a frame rate ("60 Hz"; a plain number is Hz), a fraction ("1/60") or a step ("16.7 ms"). */
  frameStep: string;
  substeps: string;
  integrator: string;
  contactModel: string;
  stiffness: string;
  groupStiffness: Record<string, string>;
  damping: string;
  speedSteps: string;
  offsets: string;
  /** The margin in percent, as the sweep page's safe envelope takes it; the API takes the fraction. */
  marginPercent: string;
  /** Friction settings (shown when objects give μ or μ_r); empty: the API's defaults. */
  frictionStiffnessRatio: string;
  slopeAngleDeg: string;
  gravityMPerS2: string;
}

/** The form as a new check starts (60 Hz, 16 substeps, symplectic Euler, linear contact). */
export const DEFAULT_CHECK_FORM: FormState = {
  frameStep: "60 Hz",
  substeps: "16",
  integrator: "symplectic-euler",
  contactModel: "linear",
  stiffness: "1500000",
  groupStiffness: {},
  damping: "catalogue",
  speedSteps: "6",
  offsets: "0, 0.6",
  marginPercent: "80",
  frictionStiffnessRatio: "",
  slopeAngleDeg: "",
  gravityMPerS2: "",
};

/** What a margin allows: ω·h ≤ 2·(1 − margin), and the steps a contact then lasts (π/(ω·h)). */
function marginHint(percentText: string): string {
  const percent = Number(percentText);
  if (percentText.trim() === "" || !Number.isFinite(percent) || percent < 0 || percent >= 100) return "share of the stability bound ω·h < 2 kept in reserve, 0 to 90 %";
  const phase = 2 * (1 - percent / 100);
  return `keeps ω·h ≤ ${Number(phase.toPrecision(3))}: a contact lasts at least ${Number((Math.PI / phase).toPrecision(2))} steps`;
}

/** The form as the API's settings; fields left empty are left out so the API names what is missing. */
export function settingsOf(form: FormState): CheckSettingsInput {
  const number = (text: string) => (text.trim() === "" ? undefined : Number(text));
  const groups = Object.fromEntries(Object.entries(form.groupStiffness).filter(([, value]) => value.trim() !== "").map(([group, value]) => [group, Number(value)]));
  const step = parseFrameStep(form.frameStep, "Hz");
  return {
    // Unreadable text is left out: the field shows why beside it, and the API names dtS as missing.
    dtS: step.ok ? step.seconds : (undefined as unknown as number),
    substeps: number(form.substeps),
    integrator: form.integrator as CheckSettingsInput["integrator"],
    contactModel: form.contactModel as CheckSettingsInput["contactModel"],
    stiffness: number(form.stiffness),
    ...(Object.keys(groups).length > 0 ? { groupStiffness: groups } : {}),
    damping: form.damping as CheckSettingsInput["damping"],
    speedSteps: number(form.speedSteps),
    offsets: form.offsets
      .split(/[,;\s]+/)
      .filter(Boolean)
      .map(Number),
    margin: form.marginPercent.trim() === "" ? undefined : Number(form.marginPercent) / 100,
    // Only when given: a check without them keeps exactly the settings it had before friction existed.
    ...(form.frictionStiffnessRatio.trim() !== "" ? { frictionStiffnessRatio: Number(form.frictionStiffnessRatio) } : {}),
    ...(form.slopeAngleDeg.trim() !== "" ? { slopeAngleDeg: Number(form.slopeAngleDeg) } : {}),
    ...(form.gravityMPerS2.trim() !== "" ? { gravityMPerS2: Number(form.gravityMPerS2) } : {}),
  };
}

export function CatalogueView({
  studioId,
  studioName,
  role,
  catalogueId,
  initialDetail,
}: {
  studioId: string;
  studioName: string;
  role: StudioRole;
  catalogueId: string;
  /** The server page's copy of `GET …/catalogues/{id}`: the catalogue paints with the page. */
  initialDetail?: { catalogue: CatalogueDetail; checks: CheckSummary[] };
}) {
  const canWrite = role === "owner" || role === "engineer";
  const detail = useQuery({
    queryKey: catalogueKeys.one(studioId, catalogueId),
    queryFn: () => apiFetch<{ catalogue: CatalogueDetail; checks: CheckSummary[] }>(cataloguePath(studioId, catalogueId)),
    ...seededBy(initialDetail),
    refetchInterval: (query) => (query.state.data?.checks.some((check) => ["queued", "running", "paused"].includes(check.status)) ? 2000 : false),
  });
  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      {detail.isPending ? (
        <LoadingRows label="catalogue" />
      ) : detail.isError ? (
        <Alert>{errorMessage(detail.error)}</Alert>
      ) : (
        <div className="space-y-6">
          <Card
            title={
              <span data-testid="catalogue-title">
                {detail.data.catalogue.name} <span className="font-mono text-sm text-ink-muted">v{detail.data.catalogue.version}</span>
              </span>
            }
            actions={
              <div className="flex flex-wrap gap-2">
                <a className={buttonClasses("secondary")} href={`${cataloguePath(studioId, catalogueId)}/file`} download data-testid="download-original">
                  Download original file
                </a>
                {detail.data.catalogue.original ? (
                  <a className={buttonClasses("secondary")} href={`${cataloguePath(studioId, catalogueId)}/file?copy=saved`} download data-testid="download-corrected">
                    Download corrected table (CSV)
                  </a>
                ) : null}
              </div>
            }
          >
            <dl className="mb-4 grid gap-2 text-sm sm:grid-cols-3">
              <div>
                <dt className="text-ink-muted">File</dt>
                <dd className="font-mono text-xs">
                  {detail.data.catalogue.fileName} ({detail.data.catalogue.fileBytes.toLocaleString("en")} bytes)
                </dd>
                {detail.data.catalogue.original ? (
                  <dd className="mt-1 text-xs text-ink-muted" data-testid="catalogue-original">
                    Corrected on upload from {detail.data.catalogue.original.fileName} ({detail.data.catalogue.original.fileBytes.toLocaleString("en")} bytes, SHA-256 {detail.data.catalogue.original.contentHash.slice(0, 12)}…), kept as the original file.
                  </dd>
                ) : null}
              </div>
              <div>
                <dt className="text-ink-muted">SHA-256</dt>
                <dd className="break-all font-mono text-xs" data-testid="catalogue-hash">
                  {detail.data.catalogue.contentHash}
                </dd>
              </div>
              <div>
                <dt className="text-ink-muted">Versions</dt>
                <dd className="flex flex-wrap gap-2">
                  {detail.data.catalogue.versions.map((version) => (
                    <Link key={version.id} href={`/studios/${studioId}/catalogues/${version.id}`} aria-current={version.id === catalogueId ? "page" : undefined} className="font-mono text-xs text-action hover:underline aria-[current=page]:font-bold">
                      v{version.version}
                    </Link>
                  ))}
                </dd>
              </div>
            </dl>
            <DataTable columns={OBJECT_COLUMNS} rows={detail.data.catalogue.objects} rowKey={(object) => object.name} testId="catalogue-objects" scroll />
          </Card>
          <ChecksCard studioId={studioId} catalogueId={catalogueId} checks={detail.data.checks} />
          {canWrite ? <CheckForm
              studioId={studioId}
              catalogueId={catalogueId}
              groups={[...new Set(detail.data.catalogue.objects.flatMap((object) => (object.group ? [object.group] : [])))]}
              friction={detail.data.catalogue.objects.some((object) => (object.friction ?? null) !== null || (object.rollingResistance ?? null) !== null)}
            /> : null}
        </div>
      )}
    </StudioShell>
  );
}

function ChecksCard({ studioId, catalogueId, checks }: { studioId: string; catalogueId: string; checks: CheckSummary[] }) {
  return (
    <Card title="Checks">
      {checks.length === 0 ? (
        <p className="text-sm text-ink-muted">No checks of this version yet.</p>
      ) : (
        <DataTable
          columns={[
            {
              key: "check",
              header: "Check",
              cell: (check) => (
                <Link href={`/studios/${studioId}/catalogues/${catalogueId}/checks/${check.id}`} className="text-action hover:underline">
                  {formatDateTime(check.createdAt)}
                </Link>
              ),
            },
            {
              key: "settings",
              header: "Settings",
              className: "font-mono text-xs",
              cell: (check) => (
                <>
                  {formatFrameRate(check.settings.dtS)} × {check.settings.substeps} substeps, {check.settings.integrator}, {check.settings.contactModel}
                  {check.settings.stiffness !== undefined ? ` k = ${check.settings.stiffness.toPrecision(4)}` : ""}
                  {check.settings.groupStiffness ? " (per group)" : ""}
                </>
              ),
            },
            { key: "status", header: "Status", cell: (check) => <StatusBadge status={check.status as SweepStatus} /> },
            { key: "cells", header: "Cells", className: "font-mono text-xs", cell: (check) => `${check.cellsDone} / ${check.cells}` },
          ]}
          rows={checks}
          rowKey={(check) => check.id}
          testId="checks-table"
        />
      )}
    </Card>
  );
}

function CheckForm({ studioId, catalogueId, groups, friction }: { studioId: string; catalogueId: string; groups: string[]; friction: boolean }) {
  const router = useRouter();
  const [form, setForm] = useState<FormState>(DEFAULT_CHECK_FORM);
  const [quote, setQuote] = useState<{ quote: Quote; key: string } | null>(null);
  const [error, setError] = useState<ApiClientError | Error | null>(null);
  const [busy, setBusy] = useState(false);
  const settings = useMemo(() => settingsOf(form), [form]);
  const key = JSON.stringify(settings);
  const set = (field: keyof FormState) => (event: { target: { value: string } }) => setForm((current) => ({ ...current, [field]: event.target.value }));
  const frameStep = parseFrameStep(form.frameStep, "Hz");
  const fieldError = (field: string) => (error instanceof ApiClientError ? error.messageFor(`settings.${field}`) : undefined);

  async function ask() {
    setBusy(true);
    setError(null);
    try {
      const answer = await apiFetch<{ quote: Quote }>(`${cataloguePath(studioId, catalogueId)}/quote`, { method: "POST", body: { settings } });
      setQuote({ quote: answer.quote, key });
    } catch (failure) {
      setError(failure as Error);
      setQuote(null);
    } finally {
      setBusy(false);
    }
  }

  async function run() {
    if (!quote || quote.key !== key) return;
    setBusy(true);
    setError(null);
    try {
      const answer = await apiFetch<{ check: CheckView }>(`${cataloguePath(studioId, catalogueId)}/checks`, { method: "POST", body: { settings, acceptedQuoteMs: quote.quote.ceilingMs } });
      router.push(`/studios/${studioId}/catalogues/${catalogueId}/checks/${answer.check.id}`);
    } catch (failure) {
      setError(failure as Error);
      setBusy(false);
    }
  }

  return (
    <Card title="Run a catalogue check">
      <form
        className="space-y-4"
        onSubmit={(event) => {
          event.preventDefault();
          void ask();
        }}
      >
        <p className="text-sm text-ink-muted">
          Every unordered pair of objects (each with itself too) meets at fractions of its closing speed (the two top speeds added) and at each impact offset, with your game&apos;s settings.
        </p>
        <div className="grid gap-4 sm:grid-cols-3">
          <TextField id="check-hz" label="Frame rate or step" value={form.frameStep} onChange={set("frameStep")} error={frameStep.ok ? fieldError("dtS") : frameStep.message} hint={frameStep.ok ? `= ${formatFrameStep(frameStep.seconds)} (60 Hz, 1/60 or 16.7 ms)` : undefined} />
          <TextField id="check-substeps" label="Substeps per frame" inputMode="numeric" value={form.substeps} onChange={set("substeps")} error={fieldError("substeps")} />
          <SelectField id="check-integrator" label="Integrator" value={form.integrator} onChange={set("integrator")}>
            <option value="symplectic-euler">symplectic Euler</option>
            <option value="velocity-verlet">velocity Verlet</option>
            <option value="explicit-euler">explicit Euler</option>
          </SelectField>
          <SelectField id="check-model" label="Contact model" value={form.contactModel} onChange={set("contactModel")}>
            <option value="linear">linear spring</option>
            <option value="hertz">Hertz</option>
          </SelectField>
          <TextField id="check-stiffness" label={`Stiffness [${form.contactModel === "linear" ? "N/m" : "N/m^1.5"}]`} inputMode="decimal" value={form.stiffness} onChange={set("stiffness")} error={fieldError("stiffness")} hint={groups.length ? "for objects whose group has no stiffness below" : undefined} />
          <SelectField id="check-damping" label="Damping" value={form.damping} onChange={set("damping")}>
            <option value="catalogue">restitution from the catalogue (smaller of the pair)</option>
            <option value="none">none (undamped)</option>
          </SelectField>
          <TextField id="check-speeds" label="Speed steps per pair" inputMode="numeric" value={form.speedSteps} onChange={set("speedSteps")} error={fieldError("speedSteps")} hint="1/n, 2/n … 1 of the closing speed" />
          <TextField id="check-offsets" label="Impact offsets" value={form.offsets} onChange={set("offsets")} error={fieldError("offsets")} hint="fractions of the sum of radii, 0 head-on" />
          <TextField
            id="check-margin"
            label="Margin [%]"
            inputMode="decimal"
            value={form.marginPercent}
            onChange={set("marginPercent")}
            error={fieldError("margin")}
            hint={marginHint(form.marginPercent)}
          />
        </div>
        {groups.length > 0 ? (
          <fieldset className="space-y-2">
            <legend className="text-sm font-medium">Per-group stiffness (optional; a pair takes the harmonic mean of its two groups)</legend>
            <div className="grid gap-4 sm:grid-cols-4">
              {groups.map((group) => (
                <TextField
                  key={group}
                  id={`check-group-${group}`}
                  label={`${group} [${form.contactModel === "linear" ? "N/m" : "N/m^1.5"}]`}
                  inputMode="decimal"
                  value={form.groupStiffness[group] ?? ""}
                  onChange={(event) => setForm((current) => ({ ...current, groupStiffness: { ...current.groupStiffness, [group]: event.target.value } }))}
                  error={fieldError(`groupStiffness.${group}`)}
                />
              ))}
            </div>
          </fieldset>
        ) : null}
        {friction ? (
          <fieldset className="space-y-2" data-testid="check-friction-settings">
            <legend className="text-sm font-medium">Friction (objects of this catalogue give μ): simulated in the pair cells and checked in closed form beside them</legend>
            <div className="grid gap-4 sm:grid-cols-3">
              <TextField id="check-kt-ratio" label="Tangential stiffness ratio k_t/k" inputMode="decimal" value={form.frictionStiffnessRatio} onChange={set("frictionStiffnessRatio")} error={fieldError("frictionStiffnessRatio")} hint="empty: 2/7 (common practice: 2/7 to 1)" />
              <TextField id="check-slope" label="Steepest slope [°]" inputMode="decimal" value={form.slopeAngleDeg} onChange={set("slopeAngleDeg")} error={fieldError("slopeAngleDeg")} hint="optional: which objects hold still on it" />
              <TextField id="check-gravity" label="Gravity [m/s²]" inputMode="decimal" value={form.gravityMPerS2} onChange={set("gravityMPerS2")} error={fieldError("gravityMPerS2")} hint="empty: 9.81" />
            </div>
          </fieldset>
        ) : null}
        {error ? <Alert>{error.message}</Alert> : null}
        {quote && quote.key === key ? (
          <div className="rounded-md border border-line p-3 text-sm" data-testid="check-quote">
            <p>
              <strong>{quote.quote.cells.toLocaleString("en")}</strong> cells ({quote.quote.cachedCells.toLocaleString("en")} cached), expected{" "}
              <strong>{formatCompute(quote.quote.expectedMs)}</strong> ({quote.quote.expectedMs.toLocaleString("en")} ms) of compute, at most <strong>{formatCompute(quote.quote.ceilingMs)}</strong> (
              {quote.quote.ceilingMs.toLocaleString("en")} ms, {formatPriceCents(quote.quote.money.ceilingCents)}); balance after: {formatMinutes(quote.quote.balanceAfterMs)}.
            </p>
            {quote.quote.warnings.map((warning) => (
              <p key={warning} className="text-danger">
                {warning}
              </p>
            ))}
          </div>
        ) : null}
        <div className="flex gap-3">
          <Button type="submit" variant="secondary" disabled={busy}>
            Get quote
          </Button>
          <Button onClick={() => void run()} disabled={busy || !quote || quote.key !== key} data-testid="check-run">
            Run check
          </Button>
        </div>
      </form>
    </Card>
  );
}
