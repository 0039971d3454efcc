"use client";

import { Alert, ButtonLink, Card, EmptyState, LoadingRows, RoleBadge } from "@/components/ui";
import { InvitesTable, MembersTable, TokensTable } from "@/components/studio/studio-tables";
import { StudioShell } from "@/components/studio/studio-shell";
import { ApiClientError, errorMessage } from "@/lib/ui/api";
import { formatDate } from "@/lib/ui/format";
import { useInvites, useMembers, useStudio, useTokens } from "@/lib/ui/queries";
import type { StudioRole } from "@/lib/ui/types";

/** A 403 from a list means "your role does not show this", which is normal for non-owners. */
function ownerOnlyNotice(error: unknown, what: string) {
  if (error instanceof ApiClientError && error.status === 403) {
    return <p className="text-sm text-ink-muted">Only owners of the studio see {what}.</p>;
  }
  return <Alert>{errorMessage(error)}</Alert>;
}

export function StudioHome({ studioId, studioName, role }: { studioId: string; studioName: string; role: StudioRole | null }) {
  const studio = useStudio(studioId);
  const members = useMembers(studioId);
  const isOwner = role === "owner";
  // Invitations and tokens are listed to owners only (the API answers 403 to everyone else).
  const invites = useInvites(studioId, isOwner);
  const tokens = useTokens(studioId, isOwner);
  const pendingInvites = invites.data ?? [];

  return (
    <StudioShell studioId={studioId} studioName={studioName} role={role}>
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-3">
        <Card title="Overview" className="lg:col-span-1">
          {studio.isPending ? (
            <LoadingRows label="the studio" />
          ) : studio.isError ? (
            <Alert>{errorMessage(studio.error)}</Alert>
          ) : (
            <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2 text-sm">
              <dt className="text-ink-muted">Status</dt>
              <dd className="font-medium">{studio.data.studio.status}</dd>
              <dt className="text-ink-muted">Created</dt>
              <dd>{formatDate(studio.data.studio.createdAt)}</dd>
              <dt className="text-ink-muted">Members</dt>
              <dd>{members.data ? members.data.length : "…"}</dd>
              <dt className="text-ink-muted">Your role</dt>
              <dd>{role ? <RoleBadge role={role} /> : "not a member (admin view)"}</dd>
              <dt className="text-ink-muted">Studio id</dt>
              <dd className="font-mono text-xs">{studio.data.studio.id}</dd>
            </dl>
          )}
        </Card>
        <Card
          title="Members and roles"
          className="lg:col-span-2"
          actions={isOwner ? <ButtonLink href={`/studios/${studioId}/members`} variant="secondary">Manage members</ButtonLink> : null}
        >
          {members.isPending ? (
            <LoadingRows label="members" />
          ) : members.isError ? (
            <Alert>{errorMessage(members.error)}</Alert>
          ) : (
            <MembersTable members={members.data} />
          )}
        </Card>
        {isOwner ? (
        <Card title="Pending invitations" className="lg:col-span-3">
          {invites.isPending ? (
            <LoadingRows label="invitations" />
          ) : invites.isError ? (
            ownerOnlyNotice(invites.error, "pending invitations")
          ) : pendingInvites.length === 0 ? (
            <EmptyState>No invitations waiting.{isOwner ? " Invite a colleague from Members." : ""}</EmptyState>
          ) : (
            <InvitesTable invites={pendingInvites} />
          )}
        </Card>
        ) : null}
        {isOwner ? (
        <Card
          title="API tokens"
          className="lg:col-span-3"
          actions={isOwner ? <ButtonLink href={`/studios/${studioId}/tokens`} variant="secondary">Manage tokens</ButtonLink> : null}
        >
          {tokens.isPending ? (
            <LoadingRows label="tokens" />
          ) : tokens.isError ? (
            ownerOnlyNotice(tokens.error, "API tokens")
          ) : tokens.data.length === 0 ? (
            <EmptyState>No API tokens. Tokens let a build script or CI job call the Kickdrift API for this studio.</EmptyState>
          ) : (
            <TokensTable tokens={tokens.data} />
          )}
        </Card>
        ) : null}
      </div>
    </StudioShell>
  );
}
