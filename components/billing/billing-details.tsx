"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState, type FormEvent } from "react";
import { Alert, Button, Card, LoadingRows, TextField } from "@/components/ui";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import type { StudioRole } from "@/lib/ui/types";
import { billingApi } from "./billing-format";

type Address = { line1: string; line2: string | null; city: string; state: string | null; postalCode: string; country: string };
type Details = { billingEmail: string | null; address: Address | null; taxId: string | null; taxNote: string };

const FIELDS = [
  ["billingEmail", "Billing e-mail", "email"],
  ["address.line1", "Address line 1", "text"],
  ["address.line2", "Address line 2 (optional)", "text"],
  ["address.postalCode", "Postal code", "text"],
  ["address.city", "City", "text"],
  ["address.state", "State or region (optional)", "text"],
  ["address.country", "Country (two-letter code, e.g. DE)", "text"],
  ["taxId", "Tax ID (optional)", "text"],
] as const;
type FieldKey = (typeof FIELDS)[number][0];

function toForm(d: Details): Record<FieldKey, string> {
  return {
    billingEmail: d.billingEmail ?? "",
    "address.line1": d.address?.line1 ?? "",
    "address.line2": d.address?.line2 ?? "",
    "address.postalCode": d.address?.postalCode ?? "",
    "address.city": d.address?.city ?? "",
    "address.state": d.address?.state ?? "",
    "address.country": d.address?.country ?? "",
    taxId: d.taxId ?? "",
  };
}

/** The billing e-mail, address and tax ID printed on invoices; owners edit, finance reads. */
export function BillingDetailsCard({ studioId, role }: { studioId: string; role: StudioRole }) {
  const api = `${billingApi(studioId)}/details`;
  const client = useQueryClient();
  const details = useQuery({ queryKey: ["billing", studioId, "details"], queryFn: () => apiFetch<Details>(api) });
  const [form, setForm] = useState<Record<FieldKey, string> | null>(null);
  const save = useMutation({
    mutationFn: (values: Record<FieldKey, string>) => {
      const hasAddress = ["address.line1", "address.city", "address.postalCode", "address.country"].some((k) => values[k as FieldKey].trim() !== "");
      return apiFetch<Details>(api, {
        method: "PUT",
        body: {
          billingEmail: values.billingEmail.trim() || null,
          address: hasAddress
            ? { line1: values["address.line1"], line2: values["address.line2"] || null, city: values["address.city"], state: values["address.state"] || null, postalCode: values["address.postalCode"], country: values["address.country"] }
            : null,
          taxId: values.taxId.trim() || null,
        },
      });
    },
    onSuccess: (saved) => {
      client.setQueryData(["billing", studioId, "details"], saved);
      setForm(null);
    },
  });
  const canEdit = role === "owner";
  if (details.isPending) return <Card title="Billing details"><LoadingRows label="billing details" /></Card>;
  if (details.isError) return <Card title="Billing details"><Alert>{errorMessage(details.error)}</Alert></Card>;
  const d = details.data;
  const error = save.error instanceof ApiClientError ? save.error : null;
  const onSubmit = (e: FormEvent) => {
    e.preventDefault();
    if (form) save.mutate(form);
  };
  return (
    <Card
      title="Billing details"
      actions={canEdit && !form ? <Button variant="secondary" onClick={() => { save.reset(); setForm(toForm(d)); }}>Edit billing details</Button> : null}
    >
      {form ? (
        <form className="grid grid-cols-1 gap-3 md:grid-cols-2" onSubmit={onSubmit} noValidate>
          {FIELDS.map(([key, label, type]) => (
            <TextField
              key={key}
              id={`billing-${key.replace(".", "-")}`}
              label={label}
              type={type}
              value={form[key]}
              error={error?.messageFor(key)}
              hint={key === "taxId" ? "Printed on invoices as entered: up to 40 letters, digits, spaces and . - /. Not validated; no tax is computed." : undefined}
              onChange={(e) => setForm({ ...form, [key]: e.target.value })}
            />
          ))}
          {save.isError && !FIELDS.some(([key]) => error?.messageFor(key)) ? <div className="md:col-span-2"><Alert>{errorMessage(save.error)}</Alert></div> : null}
          <div className="flex gap-2 md:col-span-2">
            <Button type="submit" disabled={save.isPending}>Save billing details</Button>
            <Button variant="secondary" onClick={() => setForm(null)}>Cancel</Button>
          </div>
        </form>
      ) : (
        <dl className="grid grid-cols-1 gap-3 text-sm md:grid-cols-3" data-testid="billing-details">
          <div><dt className="text-ink-muted">Billing e-mail</dt><dd>{d.billingEmail ?? "not set (invoices go to owners and finance)"}</dd></div>
          <div>
            <dt className="text-ink-muted">Address</dt>
            <dd>{d.address ? [d.address.line1, d.address.line2, `${d.address.postalCode} ${d.address.city}`, d.address.state, d.address.country].filter(Boolean).join(", ") : "not set"}</dd>
          </div>
          <div><dt className="text-ink-muted">Tax ID</dt><dd>{d.taxId ?? "not set"}</dd></div>
        </dl>
      )}
      <p className="mt-3 text-xs text-ink-muted">
        Printed on invoices issued after saving; invoices already issued keep what they were issued with. {d.taxNote}
        {canEdit ? "" : " Only owners edit these."}
      </p>
    </Card>
  );
}
