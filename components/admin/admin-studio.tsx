"use client";

import Link from "next/link";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState, type FormEvent } from "react";
import { ConfirmDialog } from "@/components/confirm-dialog";
import { Alert, Button, Card, LoadingRows, PageHeading, RoleBadge, SelectField, TextField, cx } from "@/components/ui";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate, formatDateTime } from "@/lib/ui/format";
import type { AdjustmentView, QuotaView, StudioUsageView } from "@/lib/quotas/admin";
import { DataTable, type Column } from "@/components/data-table";
import { AdminNav } from "./admin-nav";
import { AuditTable } from "./audit-table";
import { RefundForm } from "./refund-form";
import { minutes } from "./admin-format";

interface Detail {
  studio: StudioUsageView;
  quotas: QuotaView;
  members: { userId: string; email: string; name: string; role: string; joinedAt: string }[];
  adjustments: AdjustmentView[];
}

const MEMBER_COLUMNS: Column<Detail["members"][number]>[] = [
  {
    key: "member",
    header: "Member",
    cell: (m) => (
      <>
        <div className="font-medium">{m.name || "—"}</div>
        <div className="font-mono text-xs text-ink-muted">{m.email}</div>
      </>
    ),
  },
  { key: "role", header: "Role", cell: (m) => <RoleBadge role={m.role} /> },
  { key: "joined", header: "Joined", cell: (m) => formatDate(m.joinedAt), className: "text-ink-muted" },
];

const adminStudioPath = (id: string) => `/api/v1/admin/studios/${encodeURIComponent(id)}`;

export function AdminStudio({ studioId }: { studioId: string }) {
  const queryClient = useQueryClient();
  const key = ["admin", "studio", studioId];
  const detail = useQuery({ queryKey: key, queryFn: () => apiFetch<Detail>(adminStudioPath(studioId)), refetchInterval: 3_000 });
  const refresh = () => queryClient.invalidateQueries({ queryKey: ["admin"] });

  if (detail.isPending) return <LoadingRows label="studio" />;
  if (detail.isError) return <Alert>{errorMessage(detail.error)}</Alert>;
  const { studio, quotas, members, adjustments } = detail.data;
  return (
    <div>
      <PageHeading eyebrow={<Link href="/admin">Platform admin · Studios</Link>} title={studio.name}>
        <span className="font-mono text-xs">{studio.id}</span> · created {formatDate(studio.createdAt)}
      </PageHeading>
      <AdminNav />
      <div className="mb-6 grid grid-cols-2 gap-4 md:grid-cols-5" data-testid="admin-studio-standing">
        <Figure label="Status" value={studio.status} danger={studio.status === "suspended"} testId="studio-status" />
        <Figure label="This month" value={`${minutes(studio.monthUsedMs)} of ${minutes(studio.monthlyComputeMs)} (${studio.monthUsedPercent}%)`} testId="studio-month" />
        <Figure label="Balance" value={minutes(studio.balanceMs)} testId="studio-balance" />
        <Figure label="Sweeps running · queued · paused" value={`${studio.runningSweeps} · ${studio.queuedSweeps} · ${studio.pausedSweeps}`} />
        <Figure label="Overage left this month" value={minutes(studio.overageRemainingMs)} />
      </div>
      <div className="grid grid-cols-1 gap-6 xl:grid-cols-2">
        <QuotaForm studioId={studioId} quotas={quotas} onSaved={refresh} />
        <div className="space-y-6">
          <AdjustmentForm studioId={studioId} studioName={studio.name} balanceMs={studio.balanceMs} adjustments={adjustments} onSaved={refresh} />
          <StatusForm studioId={studioId} studioName={studio.name} status={studio.status} memberCount={members.length} running={studio.runningSweeps + studio.queuedSweeps} onSaved={refresh} />
          <RefundForm studioId={studioId} onSaved={refresh} />
        </div>
        <Card title={`Members (${members.length})`}>
          <DataTable rows={members} rowKey={(m) => m.userId} columns={MEMBER_COLUMNS} />
        </Card>
        <Card title="Audit log of this studio" className="xl:col-span-2">
          <AuditTable query={new URLSearchParams({ studioId })} />
        </Card>
      </div>
    </div>
  );
}

function Figure({ label, value, danger, testId }: { label: string; value: string; danger?: boolean; testId?: string }) {
  return (
    <div className="rounded-md border border-line p-3">
      <div className="text-xs uppercase tracking-wider text-ink-muted">{label}</div>
      <div className={cx("mt-1 font-medium", danger && "text-danger")} data-testid={testId}>
        {value}
      </div>
    </div>
  );
}

type QuotaKey = keyof QuotaView["effective"];
const MS_FIELDS: { key: QuotaKey; label: string }[] = [
  { key: "monthlyComputeMs", label: "Monthly compute cap (minutes)" },
  { key: "overageCapMs", label: "Overage cap per month (minutes)" },
];
const COUNT_FIELDS: { key: QuotaKey; label: string }[] = [
  { key: "maxRunningSweeps", label: "Sweeps running at once" },
  { key: "maxCellsPerSweep", label: "Cells per sweep" },
  { key: "maxStepsPerCell", label: "Steps per cell" },
  { key: "maxBodies", label: "Bodies per scene" },
];

function QuotaForm({ studioId, quotas, onSaved }: { studioId: string; quotas: QuotaView; onSaved: () => void }) {
  // Blank = the plan default; minutes for the ms quotas.
  const initial = () => {
    const v: Record<string, string> = {};
    for (const f of MS_FIELDS) v[f.key] = quotas.overrides[f.key] === null ? "" : String((quotas.overrides[f.key] as number) / 60_000);
    for (const f of COUNT_FIELDS) v[f.key] = quotas.overrides[f.key] === null ? "" : String(quotas.overrides[f.key]);
    v.overageAllowed = quotas.overrides.overageAllowed === null ? "" : String(quotas.overrides.overageAllowed);
    return v;
  };
  const [values, setValues] = useState<Record<string, string>>(initial);
  const [reason, setReason] = useState("");
  const [saved, setSaved] = useState(false);
  const save = useMutation({
    mutationFn: (body: Record<string, unknown>) => apiFetch(`${adminStudioPath(studioId)}/quotas`, { method: "PATCH", body }),
    onSuccess: () => {
      setSaved(true);
      onSaved();
    },
  });
  const error = save.error instanceof ApiClientError ? save.error : null;
  const [localError, setLocalError] = useState<string | null>(null);
  function submit(event: FormEvent) {
    event.preventDefault();
    setSaved(false);
    const body: Record<string, unknown> = { reason };
    for (const f of MS_FIELDS) {
      const raw = values[f.key].trim();
      if (raw !== "" && !(Number(raw) >= 0)) return setLocalError(`${f.label}: enter a number of minutes ≥ 0, or leave it blank for the plan default.`);
      body[f.key] = raw === "" ? null : Math.round(Number(raw) * 60_000);
    }
    for (const f of COUNT_FIELDS) {
      const raw = values[f.key].trim();
      body[f.key] = raw === "" ? null : Number(raw);
    }
    body.overageAllowed = values.overageAllowed === "" ? null : values.overageAllowed === "true";
    setLocalError(null);
    save.mutate(body);
  }
  return (
    <Card title="Quotas">
      <form onSubmit={submit} className="space-y-3" aria-label="Quotas">
        <p className="text-sm text-ink-muted">Leave a field blank for the plan default (shown as its hint). Every change is audited.</p>
        {MS_FIELDS.map((f) => (
          <TextField
            key={f.key}
            id={`quota-${f.key}`}
            label={f.label}
            inputMode="decimal"
            value={values[f.key]}
            onChange={(e) => setValues({ ...values, [f.key]: e.target.value })}
            hint={`Effective ${minutes(quotas.effective[f.key] as number)}; plan default ${minutes(quotas.defaults[f.key] as number)}`}
            error={error?.messageFor(f.key)}
          />
        ))}
        {COUNT_FIELDS.map((f) => (
          <TextField
            key={f.key}
            id={`quota-${f.key}`}
            label={f.label}
            inputMode="numeric"
            value={values[f.key]}
            onChange={(e) => setValues({ ...values, [f.key]: e.target.value })}
            hint={`Effective ${(quotas.effective[f.key] as number).toLocaleString("en")}; plan default ${(quotas.defaults[f.key] as number).toLocaleString("en")}`}
            error={error?.messageFor(f.key)}
          />
        ))}
        <SelectField id="quota-overageAllowed" label="Overage past the balance" value={values.overageAllowed} onChange={(e) => setValues({ ...values, overageAllowed: e.target.value })}>
          <option value="">Plan default ({quotas.defaults.overageAllowed ? "allowed" : "not allowed"})</option>
          <option value="true">Allowed</option>
          <option value="false">Not allowed</option>
        </SelectField>
        <TextField id="quota-reason" label="Reason (recorded in the audit log)" value={reason} onChange={(e) => setReason(e.target.value)} error={error?.messageFor("reason")} />
        {localError ? <Alert>{localError}</Alert> : null}
        {error && !MS_FIELDS.concat(COUNT_FIELDS).some((f) => error.messageFor(f.key)) ? <Alert>{error.message}</Alert> : null}
        {saved ? <Alert tone="ok">Quotas saved.</Alert> : null}
        <Button type="submit" disabled={save.isPending}>
          {save.isPending ? "Saving…" : "Save quotas"}
        </Button>
      </form>
    </Card>
  );
}

function AdjustmentForm({ studioId, studioName, balanceMs, adjustments, onSaved }: { studioId: string; studioName: string; balanceMs: number; adjustments: AdjustmentView[]; onSaved: () => void }) {
  // A revoke waits for confirmation (the amount in minutes, the balance it leaves).
  const [pendingRevokeMs, setPendingRevokeMs] = useState<number | null>(null);
  const [direction, setDirection] = useState("grant");
  const [amount, setAmount] = useState("");
  const [reason, setReason] = useState("");
  // One key per intended adjustment, so a double click or a retried request writes it once.
  const [idempotencyKey, setKey] = useState(() => `ui-${crypto.randomUUID()}`);
  const adjust = useMutation({
    mutationFn: (body: Record<string, unknown>) => apiFetch(`${adminStudioPath(studioId)}/adjustments`, { method: "POST", body }),
    onSuccess: () => {
      setAmount("");
      setReason("");
      setPendingRevokeMs(null);
      setKey(`ui-${crypto.randomUUID()}`);
      onSaved();
    },
  });
  const [localError, setLocalError] = useState<string | null>(null);
  const error = adjust.error instanceof ApiClientError ? adjust.error : null;
  function submit(event: FormEvent) {
    event.preventDefault();
    const value = Number(amount);
    if (!(value > 0)) return setLocalError("Minutes: enter a number of minutes greater than 0.");
    if (reason.trim() === "") return setLocalError("Reason: write why; it is shown in the studio's ledger and kept in the audit log.");
    setLocalError(null);
    const ms = Math.round(value * 60_000);
    if (direction === "revoke") return setPendingRevokeMs(ms);
    adjust.mutate({ computeMs: ms, reason, idempotencyKey });
  }
  return (
    <Card title="Credit adjustments">
      <form onSubmit={submit} className="space-y-3" aria-label="Credit adjustment">
        <SelectField id="adjust-direction" label="Grant or revoke" value={direction} onChange={(e) => setDirection(e.target.value)}>
          <option value="grant">Grant minutes</option>
          <option value="revoke">Revoke minutes</option>
        </SelectField>
        <TextField id="adjust-minutes" label="Minutes" inputMode="decimal" value={amount} onChange={(e) => setAmount(e.target.value)} error={localError ?? error?.messageFor("computeMs")} />
        <TextField id="adjust-reason" label="Reason (shown in the studio's ledger)" value={reason} onChange={(e) => setReason(e.target.value)} error={error?.messageFor("reason")} />
        {error && !error.messageFor("computeMs") && !error.messageFor("reason") ? <Alert>{error.message}</Alert> : null}
        <Button type="submit" disabled={adjust.isPending}>
          {adjust.isPending ? "Recording…" : "Record adjustment"}
        </Button>
      </form>
      <ConfirmDialog
        open={pendingRevokeMs !== null}
        title={`Revoke ${minutes(pendingRevokeMs ?? 0)} from ${studioName}?`}
        confirmLabel="Revoke minutes"
        danger
        busy={adjust.isPending}
        error={adjust.isError && pendingRevokeMs !== null ? adjust.error.message : null}
        onConfirm={() => pendingRevokeMs !== null && adjust.mutate({ computeMs: -pendingRevokeMs, reason, idempotencyKey })}
        onCancel={() => {
          adjust.reset();
          setPendingRevokeMs(null);
        }}
        testId="confirm-revoke-minutes"
      >
        <p>
          The balance goes from {minutes(balanceMs)} to {minutes(balanceMs - (pendingRevokeMs ?? 0))}
          {balanceMs - (pendingRevokeMs ?? 0) < 0 ? " — below zero, which is refused" : ""}. The studio sees the revoke in its ledger with your reason: “{reason.trim()}”.
        </p>
      </ConfirmDialog>
      {adjustments.length > 0 ? (
        <ul className="mt-4 divide-y divide-line text-sm" data-testid="adjustments">
          {adjustments.map((a) => (
            <li key={a.id} className="flex justify-between gap-3 py-2">
              <span>{a.memo}</span>
              <span className={cx("whitespace-nowrap font-mono", a.computeMs < 0 && "text-danger")}>
                {a.computeMs > 0 ? "+" : ""}
                {minutes(a.computeMs)} · {formatDateTime(a.createdAt)}
              </span>
            </li>
          ))}
        </ul>
      ) : null}
    </Card>
  );
}

function StatusForm({ studioId, studioName, status, memberCount, running, onSaved }: { studioId: string; studioName: string; status: string; memberCount: number; running: number; onSaved: () => void }) {
  const [confirming, setConfirming] = useState(false);
  const next = status === "suspended" ? "active" : "suspended";
  const change = useMutation({
    mutationFn: (reason: string) => apiFetch(`${adminStudioPath(studioId)}/status`, { method: "PUT", body: { status: next, reason } }),
    onSuccess: () => {
      setConfirming(false);
      onSaved();
    },
  });
  return (
    <Card title="Studio status">
      <div className="space-y-3">
        <p className="text-sm text-ink-muted">
          {status === "suspended"
            ? "Suspended: its sweeps are paused and new ones are refused; members can still read and export."
            : "Suspending pauses the studio's running sweeps and refuses new ones; members can still read and export."}
        </p>
        <Button variant={next === "suspended" ? "danger" : "primary"} onClick={() => setConfirming(true)} disabled={change.isPending}>
          {next === "suspended" ? "Suspend studio" : "Lift suspension"}
        </Button>
      </div>
      <ConfirmDialog
        open={confirming}
        title={next === "suspended" ? `Suspend ${studioName}?` : `Lift the suspension of ${studioName}?`}
        confirmLabel={next === "suspended" ? "Suspend studio" : "Lift suspension"}
        danger={next === "suspended"}
        reason={{ label: "Reason (recorded in the audit log and e-mailed to the members)" }}
        busy={change.isPending}
        error={change.isError ? change.error.message : null}
        onConfirm={(reason) => change.mutate(reason)}
        onCancel={() => {
          change.reset();
          setConfirming(false);
        }}
        testId="confirm-studio-status"
      >
        {next === "suspended" ? (
          <p>
            {running > 0 ? `Its ${running} queued or running sweeps pause at once` : "Nothing of it is running now"}; new sweeps are refused until you lift the suspension. Its {memberCount} members see a banner and get an e-mail with your reason.
          </p>
        ) : (
          <p>Its paused sweeps resume and its {memberCount} members get an e-mail that the studio is active again.</p>
        )}
      </ConfirmDialog>
    </Card>
  );
}
