"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState, type FormEvent } from "react";
import { CopyButton } from "@/components/copy-button";
import { Alert, Button, Card, EmptyState, LoadingRows, TextField } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { studioApiPath } from "@/lib/ui/queries";

/** Event types an endpoint can subscribe to (the names of docs/api.md, "Webhooks"). */
const EVENT_TYPES = [
  { type: "sweep.finished", label: "a sweep finished" },
  { type: "sweep.failed", label: "a sweep failed" },
  { type: "sweep.paused", label: "a sweep paused (out of minutes, cap, suspension)" },
  { type: "catalogue_check.finished", label: "a catalogue check finished" },
  { type: "balance.low", label: "the compute balance fell below the low-balance mark" },
] as const;

interface Endpoint {
  id: string;
  url: string;
  events: string[];
  createdAt: string;
  deliveries: { delivered: number; pending: number; failed: number };
}
interface Delivery {
  eventId: string;
  type: string;
  status: "pending" | "delivered" | "failed";
  attempts: number;
  lastStatusCode: number | null;
  lastError: string | null;
  resends: number;
  createdAt: string;
  lastAttemptAt: string | null;
}

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
    ...(initialEndpoints ? { initialData: initialEndpoints, initialDataUpdatedAt: () => Date.now() } : {}),
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
            <section className="rounded-lg border-2 border-ok bg-ok-soft p-5" aria-labelledby="new-endpoint-heading" data-testid="new-endpoint">
              <h2 id="new-endpoint-heading" className="font-semibold text-ink">
                Endpoint added
              </h2>
              <p className="mt-1 text-sm text-ink">Copy the signing secret now: your receiver needs it to verify deliveries, and it is shown only this once.</p>
              <div className="mt-3 flex flex-wrap items-center gap-3">
                <code className="min-w-0 flex-1 break-all rounded-md border border-line bg-surface px-3 py-2 font-mono text-sm" data-testid="endpoint-secret">
                  {created.secret}
                </code>
                <CopyButton value={created.secret} label="Copy secret" />
              </div>
              <Button variant="ghost" className="mt-3" onClick={() => setCreated(null)}>
                I have stored it — hide
              </Button>
            </section>
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
      <table className="w-full text-left text-sm" aria-label="Deliveries">
        <thead className="text-xs uppercase text-ink-muted">
          <tr>
            <th className="py-1 pr-3 font-medium">Event</th>
            <th className="py-1 pr-3 font-medium">Status</th>
            <th className="py-1 pr-3 font-medium">Attempts</th>
            <th className="py-1 pr-3 font-medium">Response</th>
            <th className="py-1 pr-3 font-medium">Last attempt</th>
            <th className="py-1 font-medium">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {log.data.map((delivery) => (
            <tr key={delivery.eventId} className="border-t border-line align-top">
              <td className="py-1 pr-3">
                <span className="font-mono">{delivery.type}</span>
                <br />
                <span className="font-mono text-xs text-ink-muted">{delivery.eventId}</span>
              </td>
              <td className="py-1 pr-3">{delivery.status}</td>
              <td className="py-1 pr-3 font-mono">{delivery.attempts}</td>
              <td className="py-1 pr-3">{delivery.lastStatusCode !== null ? <span className="font-mono">HTTP {delivery.lastStatusCode}</span> : (delivery.lastError ?? "—")}</td>
              <td className="py-1 pr-3 text-xs">{delivery.lastAttemptAt ? new Date(delivery.lastAttemptAt).toLocaleString() : "—"}</td>
              <td className="py-1">
                <Button variant="ghost" className="py-1" disabled={resend.isPending} onClick={() => resend.mutate(delivery)} aria-label={`Send ${delivery.eventId} again`}>
                  Send again
                </Button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
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
  const eventsError = apiError?.issues.find((issue) => issue.field.startsWith("events"))?.message ?? (apiError?.field?.startsWith("events") ? apiError.message : undefined);

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    create.mutate({ url: url.trim(), events });
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {create.error && !urlError && !eventsError ? <Alert>{errorMessage(create.error)}</Alert> : null}
      <TextField id="endpoint-url" label="Endpoint URL" hint="An https:// address of your build system or chat bridge." value={url} onChange={(event) => setUrl(event.target.value)} error={urlError} />
      <fieldset className="space-y-2" aria-describedby={eventsError ? "endpoint-events-error" : undefined}>
        <legend className="text-sm font-medium">Events</legend>
        {EVENT_TYPES.map(({ type, label }) => (
          <label key={type} className="flex items-start gap-2 text-sm">
            <input
              type="checkbox"
              checked={events.includes(type)}
              onChange={(event) => setEvents((current) => (event.target.checked ? [...new Set([...current, type])] : current.filter((item) => item !== type)))}
              className="mt-0.5 h-4 w-4 accent-[var(--kd-action)]"
            />
            <span>
              <span className="font-mono">{type}</span> <span className="text-ink-muted">— {label}</span>
            </span>
          </label>
        ))}
        {eventsError ? (
          <p id="endpoint-events-error" role="alert" className="text-sm font-medium text-danger">
            {eventsError}
          </p>
        ) : null}
      </fieldset>
      <Button type="submit" disabled={create.isPending}>
        {create.isPending ? "Adding…" : "Add endpoint"}
      </Button>
    </form>
  );
}
