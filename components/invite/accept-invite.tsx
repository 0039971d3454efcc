"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { signOut, useSession } from "next-auth/react";
import { useEffect, useRef } from "react";
import { MagicLinkForm } from "@/components/auth/magic-link-form";
import { Alert, AuthPanel, Button, LoadingRows, RoleBadge } from "@/components/ui";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { readAcceptedStudioId, readPublicInvite } from "@/lib/ui/invite";
import { sessionUser } from "@/lib/ui/session";
import { ROLE_DESCRIPTIONS } from "@/lib/ui/types";

/**
 * `autoAccept` is set when the visitor comes back from the sign-in link this page sent: they asked to
 * join by requesting it, so the invitation is accepted as soon as the session matches the invited e-mail.
 */
export function AcceptInvite({ token, mailboxEnabled, autoAccept }: { token: string; mailboxEnabled: boolean; autoAccept: boolean }) {
  const router = useRouter();
  const queryClient = useQueryClient();
  const { data: session, status } = useSession();
  const user = status === "authenticated" ? sessionUser(session) : null;
  const invitePath = `/api/v1/invites/${encodeURIComponent(token)}`;

  const invite = useQuery({
    queryKey: ["invite", token],
    queryFn: async () => readPublicInvite(await apiFetch<unknown>(invitePath)),
  });

  const accept = useMutation({
    mutationFn: async () => readAcceptedStudioId(await apiFetch<unknown>(`${invitePath}/accept`, { method: "POST", body: {} })),
    onSuccess: async (studioId) => {
      await queryClient.invalidateQueries({ queryKey: ["me"] });
      router.push(studioId ? `/studios/${studioId}` : "/studios");
      router.refresh();
    },
  });

  const details = invite.data;
  const emailMatches = Boolean(user?.email && details && user.email.toLowerCase() === details.email.toLowerCase());
  const canAccept = Boolean(details && !details.expired && !details.accepted && emailMatches);
  const autoAcceptStarted = useRef(false);
  useEffect(() => {
    if (autoAccept && canAccept && !autoAcceptStarted.current) {
      autoAcceptStarted.current = true;
      accept.mutate();
    }
  }, [autoAccept, canAccept, accept]);

  if (invite.isPending) return <LoadingRows label="the invitation" />;
  if (invite.isError || !details) {
    const gone = invite.error instanceof ApiClientError && (invite.error.status === 404 || invite.error.status === 410);
    return (
      <AuthPanel title={gone ? "This invitation is not valid" : "Could not load the invitation"}>
        <Alert>{gone ? "The link is wrong, or the invitation was withdrawn or already used. Ask the studio owner for a new one." : errorMessage(invite.error)}</Alert>
      </AuthPanel>
    );
  }

  const callbackUrl = `/invite/${token}`;

  return (
    <AuthPanel
      title={`Join ${details.studioName}`}
      intro={
        <span>
          {details.studioName} invited {details.email} to join as {details.role === "engineer" ? "an" : "a"} {details.role}. {ROLE_DESCRIPTIONS[details.role]}
        </span>
      }
    >
      <dl className="mb-6 grid grid-cols-[auto_1fr] items-center gap-x-4 gap-y-2 text-sm">
        <dt className="text-ink-muted">Studio</dt>
        <dd className="font-semibold" data-testid="invite-studio">
          {details.studioName}
        </dd>
        <dt className="text-ink-muted">Role</dt>
        <dd data-testid="invite-role">
          <RoleBadge role={details.role} />
        </dd>
        <dt className="text-ink-muted">Invited e-mail</dt>
        <dd className="font-mono text-xs">{details.email}</dd>
      </dl>

      {details.expired ? (
        <Alert>This invitation has expired. Ask an owner of {details.studioName} to send a new one.</Alert>
      ) : details.accepted ? (
        <Alert>This invitation was already used.</Alert>
      ) : status === "loading" ? (
        <LoadingRows label="your session" />
      ) : !user ? (
        <div className="space-y-4">
          <p className="text-sm text-ink-muted">Sign in as {details.email} to accept. We will e-mail a one-time sign-in link to that address.</p>
          <MagicLinkForm callbackUrl={`${callbackUrl}?accept=1`} fixedEmail={details.email} mailboxEnabled={mailboxEnabled} buttonLabel={`E-mail a sign-in link to ${details.email}`} />
          <p className="text-sm text-ink-muted">
            Have a password for this address?{" "}
            <Link href={`/signin?callbackUrl=${encodeURIComponent(`${callbackUrl}?accept=1`)}`} className="text-action underline-offset-2 hover:underline">
              Sign in with it
            </Link>
          </p>
        </div>
      ) : !emailMatches ? (
        <div className="space-y-4">
          <Alert>
            You are signed in as {user.email}, but this invitation is for {details.email}. Sign out, then open the link again.
          </Alert>
          <Button variant="secondary" onClick={() => void signOut({ callbackUrl })}>
            Sign out
          </Button>
        </div>
      ) : (
        <div className="space-y-4">
          {accept.isError ? <Alert>{errorMessage(accept.error)}</Alert> : null}
          <Button className="w-full" onClick={() => accept.mutate()} disabled={accept.isPending || accept.isSuccess}>
            {accept.isPending || accept.isSuccess ? "Joining…" : `Accept and join ${details.studioName}`}
          </Button>
        </div>
      )}
    </AuthPanel>
  );
}
