"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { Alert, Button, Card, EmptyState, TextField } from "@/components/ui";
import { formatMinutes } from "@/components/billing/billing-format";
import { DataTable, type Column } from "@/components/data-table";
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
          <DataTable
            testId="failed-meter-events"
            scroll
            rows={events}
            rowKey={(e) => e.outboxId}
            columns={[
              ...EVENT_COLUMNS,
              {
                key: "actions",
                header: "",
                className: "whitespace-nowrap space-x-2",
                cell: (e) => (
                  <>
                    <Button disabled={retry.isPending} onClick={() => retry.mutate({ outboxId: e.outboxId, rekey: false })} aria-label={`Retry meter event ${e.identifier}`}>
                      Retry
                    </Button>
                    <Button variant="secondary" disabled={retry.isPending} onClick={() => retry.mutate({ outboxId: e.outboxId, rekey: true })} aria-label={`Re-key meter event ${e.identifier}`}>
                      Re-key
                    </Button>
                  </>
                ),
              },
            ]}
          />
        </div>
      )}
    </Card>
  );
}

const EVENT_COLUMNS: Column<FailedMeterEventView>[] = [
  { key: "studio", header: "Studio", cell: (e) => e.studioName ?? e.studioId ?? "(removed studio)" },
  { key: "chunk", header: "Chunk (ledger key)", className: "font-mono text-xs", cell: (e) => (e.meterIdentifier ? `${e.identifier} (sent as ${e.meterIdentifier})` : e.identifier) },
  { key: "overage", header: "Overage min", numeric: true, cell: (e) => formatMinutes(e.valueMs) },
  { key: "debited", header: "Debited", cell: (e) => formatDateTime(new Date(e.timestamp * 1000).toISOString()) },
  { key: "attempts", header: "Attempts", numeric: true, cell: (e) => e.attempts },
  { key: "said", header: "Stripe said", className: "text-xs", cell: (e) => e.lastError ?? "" },
];
