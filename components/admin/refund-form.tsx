"use client";

import { useMutation } from "@tanstack/react-query";
import { useState, type FormEvent } from "react";
import { Alert, Button, Card, TextField } from "@/components/ui";
import { ApiClientError, apiFetch } from "@/lib/ui/api";

/** Refunds (part of) a pack purchase through Stripe; the studio's ledger takes back the minutes in proportion. */
export function RefundForm({ studioId, onSaved }: { studioId: string; onSaved: () => void }) {
  const [sessionId, setSessionId] = useState("");
  const [dollars, setDollars] = useState("");
  const [reason, setReason] = useState("");
  const [localError, setLocalError] = useState<string | null>(null);
  const refund = useMutation({
    mutationFn: (body: Record<string, unknown>) => apiFetch<{ refundId: string; amountCents: number }>(`/api/v1/admin/studios/${encodeURIComponent(studioId)}/refunds`, { method: "POST", body }),
    onSuccess: () => {
      setSessionId("");
      setDollars("");
      setReason("");
      onSaved();
    },
  });
  const error = refund.error instanceof ApiClientError ? refund.error : null;
  function submit(event: FormEvent) {
    event.preventDefault();
    let amountCents: number | undefined;
    if (dollars.trim() !== "") {
      const value = Number(dollars);
      if (!(value > 0) || !Number.isFinite(value)) return setLocalError("Amount: enter dollars greater than 0, or leave empty to refund what is left.");
      amountCents = Math.round(value * 100);
    }
    setLocalError(null);
    refund.mutate({ sessionId: sessionId.trim(), reason, ...(amountCents !== undefined ? { amountCents } : {}) });
  }
  return (
    <Card title="Refund a pack purchase">
      <form onSubmit={submit} className="space-y-3" aria-label="Refund">
        <TextField id="refund-session" label="Checkout session (cs_…, shown in the purchase's ledger memo)" value={sessionId} onChange={(e) => setSessionId(e.target.value)} error={error?.messageFor("sessionId")} />
        <TextField id="refund-amount" label="Amount in dollars (empty: all that is left)" inputMode="decimal" value={dollars} onChange={(e) => setDollars(e.target.value)} error={localError ?? error?.messageFor("amountCents")} />
        <TextField id="refund-reason" label="Reason (kept in the audit log)" value={reason} onChange={(e) => setReason(e.target.value)} error={error?.messageFor("reason")} />
        {error && !error.messageFor("sessionId") && !error.messageFor("amountCents") && !error.messageFor("reason") ? <Alert>{error.message}</Alert> : null}
        {refund.isSuccess ? <Alert tone="ok">Refunded {(refund.data.amountCents / 100).toFixed(2)} USD ({refund.data.refundId}); the minutes were taken back and owners and finance told.</Alert> : null}
        <p className="text-xs text-ink-muted">The refund goes through Stripe; the studio&apos;s balance loses the pack&apos;s minutes in proportion and may go below zero, which pauses its sweeps.</p>
        <Button type="submit" variant="danger" disabled={refund.isPending}>
          {refund.isPending ? "Refunding…" : "Refund"}
        </Button>
      </form>
    </Card>
  );
}
