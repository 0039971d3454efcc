"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { ConfirmDialog } from "@/components/confirm-dialog";
import { Alert, Button, Card, EmptyState, LoadingRows, PageHeading, TextField } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate } from "@/lib/ui/format";
import { queryKeys } from "@/lib/ui/queries";
import type { AdminUser } from "@/lib/ui/types";
import { DataTable, type Column } from "@/components/data-table";
import { AdminNav } from "./admin-nav";
import { Pager, usePaged } from "./pager";

export function AdminUsers({ selfId }: { selfId: string }) {
  const queryClient = useQueryClient();
  const [filter, setFilter] = useState("");
  const users = useQuery({
    queryKey: queryKeys.adminUsers,
    queryFn: async () => (await apiFetch<{ users: AdminUser[] }>("/api/v1/admin/users")).users,
  });
  const [pending, setPending] = useState<AdminUser | null>(null);
  const change = useMutation({
    mutationFn: ({ id, isAdmin, reason }: { id: string; isAdmin: boolean; reason: string }) =>
      apiFetch(`/api/v1/admin/users/${encodeURIComponent(id)}`, { method: "PATCH", body: { isAdmin, reason } }),
    onSuccess: () => {
      setPending(null);
      return queryClient.invalidateQueries({ queryKey: queryKeys.adminUsers });
    },
  });
  const needle = filter.trim().toLowerCase();
  const paged = usePaged((users.data ?? []).filter((u) => !needle || [u.name, u.email].some((v) => v?.toLowerCase().includes(needle))));
  return (
    <div>
      <PageHeading eyebrow="Platform admin" title="Users and platform roles">
        Every account. Platform admins set quotas, adjust credit and suspend studios; they are not studio members unless invited. Role changes are audited.
      </PageHeading>
      <AdminNav />
      <div className="mb-6 max-w-sm">
        <TextField id="users-filter" label="Filter by name or e-mail" type="search" value={filter} onChange={(e) => setFilter(e.target.value)} />
      </div>
      <Card title={`Users${users.data ? ` (${users.data.length})` : ""}`}>
        {users.isPending ? (
          <LoadingRows label="users" />
        ) : users.isError ? (
          <Alert>{errorMessage(users.error)}</Alert>
        ) : users.data.length === 0 ? (
          <EmptyState>No users yet.</EmptyState>
        ) : (
          <DataTable
            testId="admin-users"
            rows={paged.rows}
            rowKey={(u) => u.id}
            columns={[
              ...USER_COLUMNS,
              {
                key: "change",
                header: "Change",
                srOnly: true,
                cell: (u) =>
                  u.id === selfId ? (
                    <span className="text-xs text-ink-muted">you</span>
                  ) : (
                    <Button variant="secondary" disabled={change.isPending} onClick={() => setPending(u)}>
                      {u.isAdmin ? "Remove admin" : "Make admin"}
                    </Button>
                  ),
              },
            ]}
          />
        )}
        {users.data && users.data.length > 0 ? <Pager paged={paged} label="users" /> : null}
      </Card>
      <ConfirmDialog
        open={pending !== null}
        title={pending ? (pending.isAdmin ? `Remove the platform admin role of ${pending.email}?` : `Make ${pending.email} a platform admin?`) : ""}
        confirmLabel={pending?.isAdmin ? "Remove admin" : "Make admin"}
        danger
        reason={{ label: "Reason (recorded in the audit log)" }}
        busy={change.isPending}
        error={change.isError && pending ? errorMessage(change.error) : null}
        onConfirm={(reason) => pending && change.mutate({ id: pending.id, isAdmin: !pending.isAdmin, reason })}
        onCancel={() => {
          change.reset();
          setPending(null);
        }}
        testId="confirm-platform-role"
      >
        {pending?.isAdmin ? (
          <p>They lose the admin console at once: quotas, credit adjustments, suspensions and this list.</p>
        ) : (
          <p>A platform admin sets every studio&apos;s quotas, grants and revokes credit, suspends studios and reads the audit log of all of them.</p>
        )}
      </ConfirmDialog>
    </div>
  );
}

const USER_COLUMNS: Column<AdminUser>[] = [
  {
    key: "user",
    header: "User",
    cell: (u) => (
      <>
        <div className="font-medium">{u.name || "—"}</div>
        <div className="font-mono text-xs text-ink-muted">{u.email}</div>
      </>
    ),
  },
  { key: "studios", header: "Studios", cell: (u) => u.studioCount ?? "—" },
  { key: "role", header: "Platform role", cell: (u) => (u.isAdmin ? "admin" : "user") },
  { key: "joined", header: "Joined", cell: (u) => formatDate(u.createdAt), className: "text-ink-muted" },
];
