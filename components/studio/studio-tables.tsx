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
    // Below the sm breakpoint each member is a stacked block (name, e-mail, then role, date and
    // actions on one wrapping line) so a phone never scrolls the table sideways.
    <div className="relative sm:overflow-x-auto">
      <table className="w-full text-sm max-sm:block" data-testid="members-table">
        <thead className="border-b border-line max-sm:sr-only">
          <tr>
            <th scope="col" className={th}>Name</th>
            <th scope="col" className={th}>E-mail</th>
            <th scope="col" className={th}>Role</th>
            <th scope="col" className={th}>Joined</th>
            {actions ? <th scope="col" className={th}><span className="sr-only">Actions</span></th> : null}
          </tr>
        </thead>
        <tbody className="divide-y divide-line max-sm:block">
          {members.map((member) => (
            <tr key={member.userId} data-testid={`member-${member.email}`} className="max-sm:flex max-sm:flex-wrap max-sm:items-center max-sm:gap-x-3 max-sm:py-2">
              <td className={`${td} font-medium max-sm:block max-sm:w-full max-sm:p-0`}>{member.name || "—"}</td>
              <td className={`${td} break-all font-mono text-xs max-sm:block max-sm:w-full max-sm:p-0 max-sm:pb-1`}>{member.email}</td>
              <td className={`${td} max-sm:block max-sm:p-0`}>
                {roleCell ? roleCell(member) : <RoleBadge role={member.role} />}
              </td>
              <td className={`${td} whitespace-nowrap text-ink-muted max-sm:block max-sm:p-0`}>{formatDate(member.joinedAt)}</td>
              {actions ? <td className={`${td} text-right max-sm:ml-auto max-sm:block max-sm:p-0`}>{actions(member)}</td> : null}
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
