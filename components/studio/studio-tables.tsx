"use client";

import type { ReactNode } from "react";
import { RoleBadge } from "@/components/ui";
import { formatDate, formatDateTime } from "@/lib/ui/format";
import type { ApiToken, Invite, Member } from "@/lib/ui/types";

/** Read-only tables shared by the studio home and the owner pages (which add an actions column). */

const th = "px-3 py-2 text-left text-xs font-semibold uppercase tracking-wider text-ink-muted";
const td = "px-3 py-2.5 align-middle";

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
    <div className="relative overflow-x-auto">
      <table className="w-full text-sm" data-testid="members-table">
        <thead className="border-b border-line">
          <tr>
            <th scope="col" className={th}>Name</th>
            <th scope="col" className={th}>E-mail</th>
            <th scope="col" className={th}>Role</th>
            <th scope="col" className={th}>Joined</th>
            {actions ? <th scope="col" className={th}><span className="sr-only">Actions</span></th> : null}
          </tr>
        </thead>
        <tbody className="divide-y divide-line">
          {members.map((member) => (
            <tr key={member.userId} data-testid={`member-${member.email}`}>
              <td className={`${td} font-medium`}>{member.name || "—"}</td>
              <td className={`${td} font-mono text-xs`}>{member.email}</td>
              <td className={td}>
                {roleCell ? roleCell(member) : <RoleBadge role={member.role} />}
              </td>
              <td className={`${td} whitespace-nowrap text-ink-muted`}>{formatDate(member.joinedAt)}</td>
              {actions ? <td className={`${td} text-right`}>{actions(member)}</td> : null}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export function InvitesTable({ invites, actions }: { invites: Invite[]; actions?: (invite: Invite) => ReactNode }) {
  return (
    <div className="relative overflow-x-auto">
      <table className="w-full text-sm" data-testid="invites-table">
        <thead className="border-b border-line">
          <tr>
            <th scope="col" className={th}>E-mail</th>
            <th scope="col" className={th}>Role</th>
            <th scope="col" className={th}>Expires</th>
            {actions ? <th scope="col" className={th}><span className="sr-only">Actions</span></th> : null}
          </tr>
        </thead>
        <tbody className="divide-y divide-line">
          {invites.map((invite) => (
            <tr key={invite.id}>
              <td className={`${td} font-mono text-xs`}>{invite.email}</td>
              <td className={td}>
                <RoleBadge role={invite.role} />
              </td>
              <td className={`${td} whitespace-nowrap text-ink-muted`}>{formatDateTime(invite.expiresAt)}</td>
              {actions ? <td className={`${td} text-right`}>{actions(invite)}</td> : null}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export function TokensTable({ tokens, actions }: { tokens: ApiToken[]; actions?: (token: ApiToken) => ReactNode }) {
  return (
    <div className="relative overflow-x-auto">
      <table className="w-full text-sm" data-testid="tokens-table">
        <thead className="border-b border-line">
          <tr>
            <th scope="col" className={th}>Name</th>
            <th scope="col" className={th}>Scopes</th>
            <th scope="col" className={th}>Prefix</th>
            <th scope="col" className={th}>Created</th>
            <th scope="col" className={th}>Last used</th>
            <th scope="col" className={th}>Status</th>
            {actions ? <th scope="col" className={th}><span className="sr-only">Actions</span></th> : null}
          </tr>
        </thead>
        <tbody className="divide-y divide-line">
          {tokens.map((token) => (
            <tr key={token.id} className={token.revokedAt ? "text-ink-muted" : undefined}>
              <td className={`${td} font-medium`}>{token.name}</td>
              <td className={`${td} font-mono text-xs`}>{token.scopes.join(", ")}</td>
              <td className={`${td} font-mono text-xs`}>{token.prefix}…</td>
              <td className={`${td} whitespace-nowrap`}>{formatDate(token.createdAt)}</td>
              <td className={`${td} whitespace-nowrap`}>{token.lastUsedAt ? formatDateTime(token.lastUsedAt) : "never"}</td>
              <td className={td}>{token.revokedAt ? `revoked ${formatDate(token.revokedAt)}` : "active"}</td>
              {actions ? <td className={`${td} text-right`}>{token.revokedAt ? null : actions(token)}</td> : null}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
