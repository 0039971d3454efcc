"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { Alert, Button, Card, EmptyState, TextField, cx } from "@/components/ui";
import { formatMinutes, td, th } from "@/components/billing/billing-format";
import { ApiClientError, apiFetch } from "@/lib/ui/api";
import type { FailedMeterEvent } from "@/lib/billing/finance-ops";
import { formatDateTime } from "@/lib/ui/format";

// The lib type itself (a type-only import: nothing of the server module reaches the browser).
export type FailedMeterEventView = FailedMeterEvent;

/** Meter events Stripe refused for good: an admin puts each back in the outbox, as it was or under a new identifier (audited). */
export function FailedMeterEvents({ events }: { events: FailedMeterEventView[] }) {
  const client = useQueryClient();
  const [reason, setReason] = useState("");
  const retry = useMutation({
    mutationFn: (input: { outboxId: number; rekey: boolean }) =>
      apiFetch<{ state: string; meterIdentifier: string }>(`/api/v1/admin/finance/meter-events/${input.outboxId}/retry`, { method: "POST", body: { rekey: input.rekey, reason } }),
    onSuccess: () => client.invalidateQueries({ queryKey: ["admin", "finance"] }),
  });
  const error = retry.error instanceof ApiClientError ? retry.error : null;
  return (
    <Card title="Failed meter events">
      {events.length === 0 ? (
        <EmptyState>No meter event is waiting: every overage chunk reached Stripe.</EmptyState>
      ) : (
        <div className="space-y-3">
          <p className="text-sm text-ink-muted">
            Stripe refused these overage chunks for good, so they are on no invoice yet. Retry sends one as it was; re-key sends it under a new Stripe identifier (use it when Stripe holds the old identifier for something
            else). Each action is kept in the audit log.
          </p>
          <TextField id="meter-retry-reason" label="Reason (kept in the audit log)" value={reason} onChange={(e) => setReason(e.target.value)} error={error?.messageFor("reason")} />
          {error && !error.messageFor("reason") ? <Alert>{error.message}</Alert> : null}
          {retry.isSuccess ? <Alert tone="ok">{retry.data.state === "queued" ? `Queued again as ${retry.data.meterIdentifier}.` : "It was already queued or delivered; nothing changed."}</Alert> : null}
          <div className="relative overflow-x-auto">
            <table className="w-full text-sm" data-testid="failed-meter-events">
              <thead className="border-b border-line">
                <tr>
                  {["Studio", "Chunk (ledger key)", "Overage min", "Debited", "Attempts", "Stripe said", ""].map((h) => (
                    <th key={h} scope="col" className={th}>
                      {h}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody className="divide-y divide-line">
                {events.map((e) => (
                  <tr key={e.outboxId}>
                    <td className={td}>{e.studioName ?? e.studioId ?? "(removed studio)"}</td>
                    <td className={cx(td, "font-mono text-xs")}>{e.meterIdentifier ? `${e.identifier} (sent as ${e.meterIdentifier})` : e.identifier}</td>
                    <td className={cx(td, "tabular-nums")}>{formatMinutes(e.valueMs)}</td>
                    <td className={td}>{formatDateTime(new Date(e.timestamp * 1000).toISOString())}</td>
                    <td className={cx(td, "tabular-nums")}>{e.attempts}</td>
                    <td className={cx(td, "text-xs")}>{e.lastError ?? ""}</td>
                    <td className={cx(td, "whitespace-nowrap space-x-2")}>
                      <Button disabled={retry.isPending} onClick={() => retry.mutate({ outboxId: e.outboxId, rekey: false })} aria-label={`Retry meter event ${e.identifier}`}>
                        Retry
                      </Button>
                      <Button variant="secondary" disabled={retry.isPending} onClick={() => retry.mutate({ outboxId: e.outboxId, rekey: true })} aria-label={`Re-key meter event ${e.identifier}`}>
                        Re-key
                      </Button>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </div>
      )}
    </Card>
  );
}
