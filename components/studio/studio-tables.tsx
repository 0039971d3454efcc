"use client";

import type { ReactNode } from "react";
import { DataTable, type Column } from "@/components/data-table";
import { RoleBadge } from "@/components/ui";
import { formatDate, formatDateTime } from "@/lib/ui/format";
import type { ApiToken, Invite, Member } from "@/lib/ui/types";

/** Read-only tables shared by the studio home and the owner pages (which add an actions column). */

/** An actions column (its header read by screen readers only), when the page gives actions. */
function actionsColumn<Row>(actions: ((row: Row) => ReactNode) | undefined, className = "text-right"): Column<Row> | null {
  return actions ? { key: "actions", header: "Actions", srOnly: true, className, cell: actions } : null;
}

export function MembersTable({
  members,
  roleCell,
  actions,
}: {
  members: Member[];
  /** Replaces the role badge, e.g. with a role picker on the owner's page. */
  roleCell?: (member: Member) => ReactNode;
  actions?: (member: Member) => ReactNode;
}) {
  return (
    // Below the sm breakpoint each member is a stacked block (name, e-mail, then role, date and
    // actions on one wrapping line) so a phone never scrolls the table sideways.
    <DataTable
      testId="members-table"
      stackOnPhone
      rows={members}
      rowKey={(member) => member.userId}
      rowProps={(member) => ({ testId: `member-${member.email}` })}
      columns={[
        { key: "name", header: "Name", className: "font-medium max-sm:block max-sm:w-full max-sm:p-0", cell: (member) => member.name || "—" },
        { key: "email", header: "E-mail", className: "break-all font-mono text-xs max-sm:block max-sm:w-full max-sm:p-0 max-sm:pb-1", cell: (member) => member.email },
        { key: "role", header: "Role", className: "max-sm:block max-sm:p-0", cell: (member) => (roleCell ? roleCell(member) : <RoleBadge role={member.role} />) },
        { key: "joined", header: "Joined", className: "whitespace-nowrap text-ink-muted max-sm:block max-sm:p-0", cell: (member) => formatDate(member.joinedAt) },
        actionsColumn(actions, "text-right max-sm:ml-auto max-sm:block max-sm:p-0"),
      ]}
    />
  );
}

export function InvitesTable({ invites, actions }: { invites: Invite[]; actions?: (invite: Invite) => ReactNode }) {
  return (
    <DataTable
      testId="invites-table"
      scroll
      rows={invites}
      rowKey={(invite) => invite.id}
      columns={[
        { key: "email", header: "E-mail", className: "font-mono text-xs", cell: (invite) => invite.email },
        { key: "role", header: "Role", cell: (invite) => <RoleBadge role={invite.role} /> },
        { key: "expires", header: "Expires", className: "whitespace-nowrap text-ink-muted", cell: (invite) => formatDateTime(invite.expiresAt) },
        actionsColumn(actions),
      ]}
    />
  );
}

export function TokensTable({ tokens, actions }: { tokens: ApiToken[]; actions?: (token: ApiToken) => ReactNode }) {
  return (
    <DataTable
      testId="tokens-table"
      scroll
      rows={tokens}
      rowKey={(token) => token.id}
      rowProps={(token) => ({ className: token.revokedAt ? "text-ink-muted" : undefined })}
      columns={[
        { key: "name", header: "Name", className: "font-medium", cell: (token) => token.name },
        { key: "scopes", header: "Scopes", className: "font-mono text-xs", cell: (token) => token.scopes.join(", ") },
        { key: "prefix", header: "Prefix", className: "font-mono text-xs", cell: (token) => `${token.prefix}…` },
        { key: "created", header: "Created", className: "whitespace-nowrap", cell: (token) => formatDate(token.createdAt) },
        { key: "used", header: "Last used", className: "whitespace-nowrap", cell: (token) => (token.lastUsedAt ? formatDateTime(token.lastUsedAt) : "never") },
        { key: "status", header: "Status", cell: (token) => (token.revokedAt ? `revoked ${formatDate(token.revokedAt)}` : "active") },
        actionsColumn(actions && ((token: ApiToken) => (token.revokedAt ? null : actions(token)))),
      ]}
    />
  );
}
