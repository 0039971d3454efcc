"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState, type FormEvent } from "react";
import { Alert, Button, Card, CheckboxGroup, EmptyState, LoadingRows, TextField } from "@/components/ui";
import { DataTable, type Column } from "@/components/data-table";
import { SecretOnce } from "@/components/studio/secret-once";
import { StudioShell } from "@/components/studio/studio-shell";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { studioApiPath, seededBy } from "@/lib/ui/queries";
import type { DeliveryView } from "@/lib/webhooks/webhooks";

/** Event types an endpoint can subscribe to (the names of docs/api.md, "Webhooks"). */
const EVENT_TYPES = [
  { value: "sweep.finished", label: "a sweep finished" },
  { value: "sweep.failed", label: "a sweep failed" },
  { value: "sweep.paused", label: "a sweep paused (out of minutes, cap, suspension)" },
  { value: "catalogue_check.finished", label: "a catalogue check finished" },
  { value: "balance.low", label: "the compute balance fell below the low-balance mark" },
] as const;

interface Endpoint {
  id: string;
  url: string;
  events: string[];
  createdAt: string;
  deliveries: { delivered: number; pending: number; failed: number };
}
// The lib type itself (a type-only import: nothing of the server module reaches the browser).
type Delivery = DeliveryView;

const DELIVERY_COLUMNS: Column<Delivery>[] = [
  {
    key: "event",
    header: "Event",
    cell: (delivery) => (
      <>
        <span className="font-mono">{delivery.type}</span>
        <br />
        <span className="font-mono text-xs text-ink-muted">{delivery.eventId}</span>
      </>
    ),
  },
  { key: "status", header: "Status", cell: (delivery) => delivery.status },
  { key: "attempts", header: "Attempts", className: "font-mono", cell: (delivery) => delivery.attempts },
  { key: "response", header: "Response", cell: (delivery) => (delivery.lastStatusCode !== null ? <span className="font-mono">HTTP {delivery.lastStatusCode}</span> : (delivery.lastError ?? "—")) },
  { key: "last", header: "Last attempt", className: "text-xs", cell: (delivery) => (delivery.lastAttemptAt ? new Date(delivery.lastAttemptAt).toLocaleString() : "—") },
];

const endpointsKey = (studioId: string) => ["webhooks", studioId] as const;
const deliveriesKey = (studioId: string, endpointId: string) => ["webhook-deliveries", studioId, endpointId] as const;

export function WebhooksManager({ studioId, studioName, initialEndpoints }: { studioId: string; studioName: string; initialEndpoints?: Endpoint[] }) {
  const queryClient = useQueryClient();
  const [created, setCreated] = useState<{ endpoint: Endpoint; secret: string } | null>(null);
  const [open, setOpen] = useState<string | null>(null);
  const endpoints = useQuery({
    queryKey: endpointsKey(studioId),
    queryFn: async () => (await apiFetch<{ endpoints: Endpoint[] }>(`${studioApiPath(studioId)}/webhooks`)).endpoints,
    // The server page's copy: the list paints with the page.
    ...seededBy(initialEndpoints),
  });
  const remove = useMutation({
    mutationFn: (endpoint: Endpoint) => apiFetch<unknown>(`${studioApiPath(studioId)}/webhooks/${encodeURIComponent(endpoint.id)}`, { method: "DELETE" }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: endpointsKey(studioId) }),
  });

  return (
    <StudioShell studioId={studioId} studioName={studioName} role="owner">
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0 space-y-6">
          {created ? (
            <SecretOnce id="new-endpoint" secretTestId="endpoint-secret" title="Endpoint added" secret={created.secret} onHide={() => setCreated(null)}>
              Copy the signing secret now: your receiver needs it to verify deliveries, and it is shown only this once.
            </SecretOnce>
          ) : null}
          {remove.isError ? <Alert>{errorMessage(remove.error)}</Alert> : null}
          <Card title="Webhook endpoints">
            {endpoints.isPending ? (
              <LoadingRows label="endpoints" />
            ) : endpoints.isError ? (
              <Alert>{errorMessage(endpoints.error)}</Alert>
            ) : endpoints.data.length === 0 ? (
              <EmptyState>No endpoints yet.</EmptyState>
            ) : (
              <ul className="divide-y divide-line" data-testid="webhook-endpoints">
                {endpoints.data.map((endpoint) => (
                  <li key={endpoint.id} className="py-3">
                    <div className="flex flex-wrap items-center gap-3">
                      <code className="min-w-0 flex-1 break-all font-mono text-sm">{endpoint.url}</code>
                      <span className="text-xs text-ink-muted">
                        {endpoint.deliveries.delivered} delivered · {endpoint.deliveries.pending} waiting · {endpoint.deliveries.failed} failed
                      </span>
                      <Button variant="ghost" className="py-1" onClick={() => setOpen(open === endpoint.id ? null : endpoint.id)} aria-expanded={open === endpoint.id}>
                        {open === endpoint.id ? "Hide deliveries" : "Deliveries"}
                      </Button>
                      <Button variant="danger" className="py-1" disabled={remove.isPending} onClick={() => remove.mutate(endpoint)} aria-label={`Remove ${endpoint.url}`}>
                        Remove
                      </Button>
                    </div>
                    <p className="mt-1 font-mono text-xs text-ink-muted">{endpoint.events.join(", ")}</p>
                    {open === endpoint.id ? <DeliveryLog studioId={studioId} endpointId={endpoint.id} /> : null}
                  </li>
                ))}
              </ul>
            )}
          </Card>
          <p className="text-sm text-ink-muted">
            Each delivery is a POST of the event as JSON, signed as the open Standard Webhooks specification describes (headers <code className="font-mono">webhook-id</code>,{" "}
            <code className="font-mono">webhook-timestamp</code>, <code className="font-mono">webhook-signature</code>). Verify the signature, reject timestamps older than five
            minutes and ignore an event id you have already processed. A delivery that fails is retried with growing pauses; the log shows each endpoint&apos;s last answer.
          </p>
        </div>
        <Card title="Add an endpoint">
          <CreateEndpointForm studioId={studioId} onCreated={setCreated} />
        </Card>
      </div>
    </StudioShell>
  );
}

function DeliveryLog({ studioId, endpointId }: { studioId: string; endpointId: string }) {
  const queryClient = useQueryClient();
  const log = useQuery({
    queryKey: deliveriesKey(studioId, endpointId),
    queryFn: async () => (await apiFetch<{ deliveries: Delivery[] }>(`${studioApiPath(studioId)}/webhooks/${encodeURIComponent(endpointId)}/deliveries`)).deliveries,
    refetchInterval: 5_000,
  });
  const resend = useMutation({
    mutationFn: (delivery: Delivery) =>
      apiFetch<unknown>(`${studioApiPath(studioId)}/webhooks/${encodeURIComponent(endpointId)}/deliveries/${encodeURIComponent(delivery.eventId)}/resend`, { method: "POST" }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: deliveriesKey(studioId, endpointId) }),
  });
  if (log.isPending) return <LoadingRows label="deliveries" />;
  if (log.isError) return <Alert>{errorMessage(log.error)}</Alert>;
  if (log.data.length === 0) return <EmptyState>Nothing sent to this endpoint yet.</EmptyState>;
  return (
    <div className="mt-3 overflow-x-auto">
      {resend.isError ? <Alert>{errorMessage(resend.error)}</Alert> : null}
      <DataTable
        label="Deliveries"
        rows={log.data}
        rowKey={(delivery) => delivery.eventId}
        columns={[
          ...DELIVERY_COLUMNS,
          {
            key: "actions",
            header: "Actions",
            srOnly: true,
            cell: (delivery) => (
              <Button variant="ghost" className="py-1" disabled={resend.isPending} onClick={() => resend.mutate(delivery)} aria-label={`Send ${delivery.eventId} again`}>
                Send again
              </Button>
            ),
          },
        ]}
      />
    </div>
  );
}

function CreateEndpointForm({ studioId, onCreated }: { studioId: string; onCreated: (created: { endpoint: Endpoint; secret: string }) => void }) {
  const queryClient = useQueryClient();
  const [url, setUrl] = useState("");
  const [events, setEvents] = useState<string[]>(["sweep.finished", "sweep.failed"]);
  const create = useMutation({
    mutationFn: (input: { url: string; events: string[] }) => apiFetch<{ endpoint: Endpoint; secret: string }>(`${studioApiPath(studioId)}/webhooks`, { method: "POST", body: input }),
    onSuccess: async (result) => {
      setUrl("");
      onCreated(result);
      await queryClient.invalidateQueries({ queryKey: endpointsKey(studioId) });
    },
  });
  const apiError = create.error instanceof ApiClientError ? create.error : null;
  const urlError = apiError?.messageFor("url");
  const eventsError = apiError?.messageUnder("events");

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    create.mutate({ url: url.trim(), events });
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {create.error && !urlError && !eventsError ? <Alert>{errorMessage(create.error)}</Alert> : null}
      <TextField id="endpoint-url" label="Endpoint URL" hint="An https:// address of your build system or chat bridge." value={url} onChange={(event) => setUrl(event.target.value)} error={urlError} />
      <CheckboxGroup id="endpoint-events" legend="Events" options={EVENT_TYPES} valuesAsCode selected={events} onChange={setEvents} error={eventsError} />
      <Button type="submit" disabled={create.isPending}>
        {create.isPending ? "Adding…" : "Add endpoint"}
      </Button>
    </form>
  );
}
