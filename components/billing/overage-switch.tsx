"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import { Alert, Button } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { billingApi } from "./billing-format";

/**
 * The owner's overage switch on the Billing page. A platform admin permits overage and sets its
 * monthly cap; within that the owner turns it on or off (PUT …/billing/overage).
 */
export function OverageSwitch({ studioId, permitted, on }: { studioId: string; permitted: boolean; on: boolean }) {
  const client = useQueryClient();
  const flip = useMutation({
    mutationFn: (overageOn: boolean) => apiFetch<unknown>(`${billingApi(studioId)}/overage`, { method: "PUT", body: { overageOn } }),
    onSuccess: () => client.invalidateQueries({ queryKey: ["billing", studioId, "summary"] }),
  });
  if (!permitted) return <p className="text-xs text-ink-muted" data-testid="overage-switch">Overage is not permitted for this studio yet; Kickdrift support can permit it and set its monthly cap.</p>;
  return (
    <div className="space-y-2" data-testid="overage-switch">
      <Button variant="secondary" onClick={() => flip.mutate(!on)} disabled={flip.isPending}>
        {on ? "Switch overage off" : "Switch overage on"}
      </Button>
      <p className="text-xs text-ink-muted">{on ? "Off: sweeps pause at zero balance from their next chunk; nothing more is invoiced." : "On: past the balance, compute is invoiced monthly up to the cap."}</p>
      {flip.isError ? <Alert>{errorMessage(flip.error)}</Alert> : null}
    </div>
  );
}
