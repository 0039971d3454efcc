"use client";

import { useState, type FormEvent } from "react";
import { Button, Card, PageHeading, SelectField, TextField } from "@/components/ui";
import { AUDIT_ACTION_LABELS } from "./audit-actions";
import { AdminNav } from "./admin-nav";
import { AuditTable } from "./audit-table";

export function AdminAudit() {
  const [form, setForm] = useState({ studioId: "", action: "", actor: "", from: "", to: "" });
  const [query, setQuery] = useState(new URLSearchParams());
  function submit(event: FormEvent) {
    event.preventDefault();
    const q = new URLSearchParams();
    for (const [k, v] of Object.entries(form)) if (v.trim()) q.set(k, v.trim());
    setQuery(q);
  }
  return (
    <div>
      <PageHeading eyebrow="Platform admin" title="Audit log">
        Who did what and when, with the values before and after: quota changes, credit adjustments, role changes, API tokens, suspensions. Entries are
        never changed or deleted.
      </PageHeading>
      <AdminNav />
      <Card title="Filter">
        <form onSubmit={submit} className="grid grid-cols-1 gap-3 md:grid-cols-6" aria-label="Audit filter">
          <TextField id="audit-studio" label="Studio id" value={form.studioId} onChange={(e) => setForm({ ...form, studioId: e.target.value })} />
          <SelectField id="audit-action" label="Action" value={form.action} onChange={(e) => setForm({ ...form, action: e.target.value })}>
            <option value="">Any</option>
            {Object.entries(AUDIT_ACTION_LABELS).map(([value, label]) => (
              <option key={value} value={value}>
                {label}
              </option>
            ))}
          </SelectField>
          <TextField id="audit-actor" label="Actor e-mail" value={form.actor} onChange={(e) => setForm({ ...form, actor: e.target.value })} />
          <TextField id="audit-from" label="From" type="date" value={form.from} onChange={(e) => setForm({ ...form, from: e.target.value })} />
          <TextField id="audit-to" label="To" type="date" value={form.to} onChange={(e) => setForm({ ...form, to: e.target.value })} />
          <div className="flex items-end">
            <Button type="submit">Apply</Button>
          </div>
        </form>
      </Card>
      <div className="mt-6">
        <Card title="Entries">
          <AuditTable query={query} />
        </Card>
      </div>
    </div>
  );
}
