"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useState, type FormEvent } from "react";
import { ConfirmDialog } from "@/components/confirm-dialog";
import { Alert, Button, Card, EmptyState, LoadingRows, SelectField, TextField } from "@/components/ui";
import { StudioShell } from "@/components/studio/studio-shell";
import { InvitesTable, MembersTable } from "@/components/studio/studio-tables";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { queryKeys, studioApiPath, useInvites, useMembers } from "@/lib/ui/queries";
import { ROLE_DESCRIPTIONS, STUDIO_ROLES, type Invite, type Member, type StudioRole } from "@/lib/ui/types";

export function MembersManager({
  studioId,
  studioName,
  currentUserId,
  initialMembers,
  initialInvites,
}: {
  studioId: string;
  studioName: string;
  currentUserId: string;
  initialMembers?: Member[];
  initialInvites?: Invite[];
}) {
  const members = useMembers(studioId, initialMembers);
  const invites = useInvites(studioId, true, initialInvites);
  const queryClient = useQueryClient();
  const router = useRouter();
  const [actionError, setActionError] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  // A role change and a withdrawal wait here for the owner's confirmation.
  const [pendingRole, setPendingRole] = useState<{ member: Member; role: StudioRole } | null>(null);
  const [pendingWithdraw, setPendingWithdraw] = useState<Invite | null>(null);

  const refresh = () => queryClient.invalidateQueries({ queryKey: queryKeys.studio(studioId) });

  const changeRole = useMutation({
    mutationFn: ({ userId, role }: { userId: string; role: StudioRole }) =>
      apiFetch<unknown>(`${studioApiPath(studioId)}/members/${encodeURIComponent(userId)}`, { method: "PATCH", body: { role } }),
    onMutate: () => {
      setActionError(null);
      setNotice(null);
    },
    onSuccess: (_data, { userId, role }) => {
      setPendingRole(null);
      setNotice(`Role changed to ${role}.`);
      // Giving up your own owner role takes this page away from you: let the server guard decide again.
      if (userId === currentUserId) router.refresh();
    },
    onError: (error) => setActionError(errorMessage(error)),
    onSettled: refresh,
  });

  const removeMember = useMutation({
    mutationFn: (member: Member) => apiFetch<unknown>(`${studioApiPath(studioId)}/members/${encodeURIComponent(member.userId)}`, { method: "DELETE" }),
    onMutate: () => {
      setActionError(null);
      setNotice(null);
    },
    onSuccess: (_data, member) => {
      if (member.userId === currentUserId) {
        void queryClient.invalidateQueries({ queryKey: queryKeys.studios });
        router.push("/studios");
        return;
      }
      setNotice(`${member.email} was removed from the studio.`);
    },
    onError: (error) => setActionError(errorMessage(error)),
    onSettled: refresh,
  });

  const revokeInvite = useMutation({
    mutationFn: (invite: Invite) => apiFetch<unknown>(`${studioApiPath(studioId)}/invites/${encodeURIComponent(invite.id)}`, { method: "DELETE" }),
    onMutate: () => {
      setActionError(null);
      setNotice(null);
    },
    onSuccess: (_data, invite) => {
      setPendingWithdraw(null);
      setNotice(`The invitation for ${invite.email} was withdrawn.`);
    },
    onError: (error) => setActionError(errorMessage(error)),
    onSettled: refresh,
  });

  return (
    <StudioShell studioId={studioId} studioName={studioName} role="owner">
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0 space-y-6">
          {actionError ? <div data-testid="member-action-error"><Alert>{actionError}</Alert></div> : null}
          {notice ? <Alert tone="ok">{notice}</Alert> : null}
          <Card title="Members">
            {members.isPending ? (
              <LoadingRows label="members" />
            ) : members.isError ? (
              <Alert>{errorMessage(members.error)}</Alert>
            ) : (
              <MembersTable
                members={members.data}
                roleCell={(member) => (
                  <RolePicker member={member} busy={changeRole.isPending || removeMember.isPending} onChange={(role) => setPendingRole({ member, role })} />
                )}
                actions={(member) => (
                  <RemoveMember member={member} isSelf={member.userId === currentUserId} busy={changeRole.isPending || removeMember.isPending} onRemove={() => removeMember.mutate(member)} />
                )}
              />
            )}
          </Card>
          <Card title="Pending invitations">
            {invites.isPending ? (
              <LoadingRows label="invitations" />
            ) : invites.isError ? (
              <Alert>{errorMessage(invites.error)}</Alert>
            ) : invites.data.length === 0 ? (
              <EmptyState>No invitations waiting.</EmptyState>
            ) : (
              <InvitesTable
                invites={invites.data}
                actions={(invite) => (
                  <Button variant="ghost" className="py-1" disabled={revokeInvite.isPending} onClick={() => setPendingWithdraw(invite)} aria-label={`Withdraw the invitation for ${invite.email}`}>
                    Withdraw
                  </Button>
                )}
              />
            )}
          </Card>
        </div>
        <Card title="Invite someone">
          <InviteForm studioId={studioId} onInvited={(email) => setNotice(`Invitation e-mailed to ${email}. The link is valid for 7 days.`)} />
        </Card>
      </div>
      <ConfirmDialog
        open={pendingRole !== null}
        title={pendingRole ? roleChangeTitle(pendingRole.member, pendingRole.role, currentUserId) : ""}
        confirmLabel={pendingRole?.role === "owner" ? "Make owner" : "Change role"}
        danger={pendingRole !== null && (pendingRole.role === "owner" || pendingRole.member.role === "owner")}
        busy={changeRole.isPending}
        error={changeRole.isError && pendingRole ? errorMessage(changeRole.error) : null}
        onConfirm={() => pendingRole && changeRole.mutate({ userId: pendingRole.member.userId, role: pendingRole.role })}
        onCancel={() => {
          changeRole.reset();
          setPendingRole(null);
        }}
        testId="confirm-role-change"
      >
        {pendingRole ? <RoleChangeConsequences member={pendingRole.member} role={pendingRole.role} isSelf={pendingRole.member.userId === currentUserId} /> : null}
      </ConfirmDialog>
      <ConfirmDialog
        open={pendingWithdraw !== null}
        title={pendingWithdraw ? `Withdraw the invitation for ${pendingWithdraw.email}?` : ""}
        confirmLabel="Withdraw invitation"
        danger
        busy={revokeInvite.isPending}
        error={revokeInvite.isError && pendingWithdraw ? errorMessage(revokeInvite.error) : null}
        onConfirm={() => pendingWithdraw && revokeInvite.mutate(pendingWithdraw)}
        onCancel={() => {
          revokeInvite.reset();
          setPendingWithdraw(null);
        }}
        testId="confirm-withdraw-invite"
      >
        <p>The link in the e-mail stops working at once. You can invite the same address again later.</p>
      </ConfirmDialog>
    </StudioShell>
  );
}

function roleChangeTitle(member: Member, role: StudioRole, currentUserId: string): string {
  const who = member.userId === currentUserId ? "your own role" : `the role of ${member.email}`;
  return role === "owner" && member.userId !== currentUserId ? `Make ${member.email} an owner?` : `Change ${who} from ${member.role} to ${role}?`;
}

/** What a role change does, said before it is done. */
function RoleChangeConsequences({ member, role, isSelf }: { member: Member; role: StudioRole; isSelf: boolean }) {
  return (
    <>
      <p>{ROLE_DESCRIPTIONS[role]}</p>
      {role === "owner" && !isSelf ? (
        <p className="font-medium">
          An owner has every right you have: managing members and their roles (yours included), API tokens, webhooks and billing. Only another owner can take it back.
        </p>
      ) : null}
      {member.role === "owner" && role !== "owner" ? (
        <p className="font-medium">{isSelf ? "You give up the owner role: this page and billing close to you, and only another owner can give the role back." : `${member.email} loses the owner's rights on members, tokens, webhooks and billing.`}</p>
      ) : null}
      <p className="text-ink-muted">The change takes effect at once and is recorded in the audit log.</p>
    </>
  );
}

function RolePicker({ member, busy, onChange }: { member: Member; busy: boolean; onChange: (role: StudioRole) => void }) {
  const selectId = `role-${member.userId}`;
  return (
    <>
      <label htmlFor={selectId} className="sr-only">
        Role of {member.email}
      </label>
      <select
        id={selectId}
        value={member.role}
        disabled={busy}
        onChange={(event) => onChange(event.target.value as StudioRole)}
        className="rounded-md border border-line bg-surface px-2 py-1 text-sm"
      >
        {STUDIO_ROLES.map((role) => (
          <option key={role} value={role}>
            {role}
          </option>
        ))}
      </select>
    </>
  );
}

function RemoveMember({ member, isSelf, busy, onRemove }: { member: Member; isSelf: boolean; busy: boolean; onRemove: () => void }) {
  const [confirming, setConfirming] = useState(false);
  if (!confirming) {
    return (
      <Button variant="ghost" className="py-1" disabled={busy} onClick={() => setConfirming(true)} aria-label={`Remove ${member.email}`}>
        Remove
      </Button>
    );
  }
  return (
    <div className="flex items-center justify-end gap-2">
      <Button
        variant="danger"
        className="py-1"
        disabled={busy}
        onClick={() => {
          setConfirming(false);
          onRemove();
        }}
      >
        {isSelf ? "Leave studio" : "Confirm removal"}
      </Button>
      <Button variant="ghost" className="py-1" onClick={() => setConfirming(false)}>
        Cancel
      </Button>
    </div>
  );
}

function InviteForm({ studioId, onInvited }: { studioId: string; onInvited: (email: string) => void }) {
  const queryClient = useQueryClient();
  const [email, setEmail] = useState("");
  const [role, setRole] = useState<StudioRole>("engineer");
  const invite = useMutation({
    mutationFn: (input: { email: string; role: StudioRole }) =>
      apiFetch<{ invite: Invite }>(`${studioApiPath(studioId)}/invites`, { method: "POST", body: input }),
    onSuccess: async ({ invite: created }) => {
      setEmail("");
      onInvited(created.email);
      await queryClient.invalidateQueries({ queryKey: queryKeys.invites(studioId) });
    },
  });
  const apiError = invite.error instanceof ApiClientError ? invite.error : null;
  const emailError = apiError?.messageFor("email");
  const roleError = apiError?.messageFor("role");

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    invite.mutate({ email: email.trim(), role });
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {invite.error && !emailError && !roleError ? <Alert>{errorMessage(invite.error)}</Alert> : null}
      <TextField id="invite-email" label="E-mail" type="email" autoComplete="off" value={email} onChange={(event) => setEmail(event.target.value)} error={emailError} />
      <SelectField id="invite-role" label="Role" value={role} onChange={(event) => setRole(event.target.value as StudioRole)} error={roleError}>
        {STUDIO_ROLES.map((option) => (
          <option key={option} value={option}>
            {option}
          </option>
        ))}
      </SelectField>
      <p className="text-xs text-ink-muted">{ROLE_DESCRIPTIONS[role]}</p>
      <Button type="submit" disabled={invite.isPending}>
        {invite.isPending ? "Sending…" : "Send invitation"}
      </Button>
    </form>
  );
}
