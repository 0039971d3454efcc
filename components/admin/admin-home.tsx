"use client";

import { useQuery } from "@tanstack/react-query";
import { useState } from "react";
import { Alert, Card, EmptyState, LoadingRows, PageHeading, TextField } from "@/components/ui";
import { apiFetch, errorMessage } from "@/lib/ui/api";
import { formatDate } from "@/lib/ui/format";
import { queryKeys } from "@/lib/ui/queries";
import type { AdminStudio, AdminUser } from "@/lib/ui/types";
import { AdminNav } from "./admin-nav";

const th = "px-3 py-2 text-left text-xs font-semibold uppercase tracking-wider text-ink-muted";
const td = "px-3 py-2.5";

export function AdminHome() {
  const [filter, setFilter] = useState("");
  const studios = useQuery({
    queryKey: queryKeys.adminStudios,
    queryFn: async () => (await apiFetch<{ studios: AdminStudio[] }>("/api/v1/admin/studios")).studios,
  });
  const users = useQuery({
    queryKey: queryKeys.adminUsers,
    queryFn: async () => (await apiFetch<{ users: AdminUser[] }>("/api/v1/admin/users")).users,
  });
  const needle = filter.trim().toLowerCase();
  const matches = (...values: (string | null | undefined)[]) => !needle || values.some((value) => value?.toLowerCase().includes(needle));

  return (
    <div>
      <PageHeading eyebrow="Platform admin" title="Studios and users">
        Every studio and account on this Kickdrift installation. Admins read these lists but are not members of a studio unless invited.
      </PageHeading>
      <AdminNav current="/admin" />
      <div className="mb-6 max-w-sm">
        <TextField id="admin-filter" label="Filter by name, e-mail or id" type="search" value={filter} onChange={(event) => setFilter(event.target.value)} />
      </div>
      <div className="grid grid-cols-1 gap-6 xl:grid-cols-2">
        <Card title={`Studios${studios.data ? ` (${studios.data.length})` : ""}`}>
          {studios.isPending ? (
            <LoadingRows label="studios" />
          ) : studios.isError ? (
            <Alert>{errorMessage(studios.error)}</Alert>
          ) : studios.data.length === 0 ? (
            <EmptyState>No studios yet.</EmptyState>
          ) : (
            <div className="relative overflow-x-auto">
              <table className="w-full text-sm" data-testid="admin-studios">
                <thead className="border-b border-line">
                  <tr>
                    <th scope="col" className={th}>Studio</th>
                    <th scope="col" className={th}>Status</th>
                    <th scope="col" className={th}>Members</th>
                    <th scope="col" className={th}>Created</th>
                  </tr>
                </thead>
                <tbody className="divide-y divide-line">
                  {studios.data
                    .filter((studio) => matches(studio.name, studio.id))
                    .map((studio) => (
                      <tr key={studio.id}>
                        <td className={td}>
                          <div className="font-medium">{studio.name}</div>
                          <div className="font-mono text-xs text-ink-muted">{studio.id}</div>
                        </td>
                        <td className={td}>{studio.status}</td>
                        <td className={td}>{studio.memberCount ?? "—"}</td>
                        <td className={`${td} text-ink-muted`}>{formatDate(studio.createdAt)}</td>
                      </tr>
                    ))}
                </tbody>
              </table>
            </div>
          )}
        </Card>
        <Card title={`Users${users.data ? ` (${users.data.length})` : ""}`}>
          {users.isPending ? (
            <LoadingRows label="users" />
          ) : users.isError ? (
            <Alert>{errorMessage(users.error)}</Alert>
          ) : users.data.length === 0 ? (
            <EmptyState>No users yet.</EmptyState>
          ) : (
            <div className="relative overflow-x-auto">
              <table className="w-full text-sm" data-testid="admin-users">
                <thead className="border-b border-line">
                  <tr>
                    <th scope="col" className={th}>User</th>
                    <th scope="col" className={th}>Studios</th>
                    <th scope="col" className={th}>Admin</th>
                    <th scope="col" className={th}>Joined</th>
                  </tr>
                </thead>
                <tbody className="divide-y divide-line">
                  {users.data
                    .filter((user) => matches(user.name, user.email, user.id))
                    .map((user) => (
                      <tr key={user.id}>
                        <td className={td}>
                          <div className="font-medium">{user.name || "—"}</div>
                          <div className="font-mono text-xs text-ink-muted">{user.email}</div>
                        </td>
                        <td className={td}>{user.studioCount ?? "—"}</td>
                        <td className={td}>{user.isAdmin ? "yes" : "no"}</td>
                        <td className={`${td} text-ink-muted`}>{formatDate(user.createdAt)}</td>
                      </tr>
                    ))}
                </tbody>
              </table>
            </div>
          )}
        </Card>
      </div>
    </div>
  );
}
