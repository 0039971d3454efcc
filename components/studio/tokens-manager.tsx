"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import { useState, type FormEvent } from "react";
import { ConfirmDialog } from "@/components/confirm-dialog";
import Link from "next/link";
import { Alert, Button, Card, CheckboxGroup, EmptyState, LoadingRows, TextField } from "@/components/ui";
import { SecretOnce } from "@/components/studio/secret-once";
import { StudioShell } from "@/components/studio/studio-shell";
import { TokensTable } from "@/components/studio/studio-tables";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { queryKeys, studioApiPath, useTokens } from "@/lib/ui/queries";
import type { ApiToken } from "@/lib/ui/types";

type Scope = "read" | "write";
type CreatedToken = { token: ApiToken; secret: string };

const SCOPES: { value: Scope; label: string }[] = [
  { value: "read", label: "GET requests of this studio" },
  { value: "write", label: "also create sweeps and other studio resources" },
];

export function TokensManager({ studioId, studioName, initialTokens }: { studioId: string; studioName: string; initialTokens?: ApiToken[] }) {
  const tokens = useTokens(studioId, true, initialTokens);
  const queryClient = useQueryClient();
  const [created, setCreated] = useState<CreatedToken | null>(null);
  const [pendingRevoke, setPendingRevoke] = useState<ApiToken | null>(null);
  const revoke = useMutation({
    mutationFn: (token: ApiToken) => apiFetch<unknown>(`${studioApiPath(studioId)}/tokens/${encodeURIComponent(token.id)}`, { method: "DELETE" }),
    onSuccess: () => setPendingRevoke(null),
    onSettled: () => queryClient.invalidateQueries({ queryKey: queryKeys.tokens(studioId) }),
  });

  return (
    <StudioShell studioId={studioId} studioName={studioName} role="owner">
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0 space-y-6">
          {created ? (
            <SecretOnce id="new-token" secretTestId="token-secret" title={`Token “${created.token.name}” created`} secret={created.secret} onHide={() => setCreated(null)}>
              Copy the secret now. It is shown only this once; Kickdrift keeps only a hash of it.
            </SecretOnce>
          ) : null}
          {revoke.isError ? <Alert>{errorMessage(revoke.error)}</Alert> : null}
          <Card title="API tokens">
            {tokens.isPending ? (
              <LoadingRows label="tokens" />
            ) : tokens.isError ? (
              <Alert>{errorMessage(tokens.error)}</Alert>
            ) : tokens.data.length === 0 ? (
              <EmptyState>No tokens yet.</EmptyState>
            ) : (
              <TokensTable
                tokens={tokens.data}
                actions={(token) => (
                  <Button variant="danger" className="py-1" disabled={revoke.isPending} onClick={() => setPendingRevoke(token)} aria-label={`Revoke ${token.name}`}>
                    Revoke
                  </Button>
                )}
              />
            )}
          </Card>
          <p className="text-sm text-ink-muted">
            Send a token as <code className="font-mono">Authorization: Bearer kd_…</code>. It acts for this studio only: <code className="font-mono">read</code> allows
            GET requests, <code className="font-mono">write</code> also allows creating studio resources such as sweeps. Tokens never manage members,
            invitations or other tokens.{" "}
            <Link href="/help/api" className="font-medium text-action hover:underline">
              Read the API reference
            </Link>{" "}
            for every route, with curl examples.
          </p>
        </div>
        <Card title="Create a token">
          <CreateTokenForm studioId={studioId} onCreated={setCreated} />
        </Card>
      </div>
      <ConfirmDialog
        open={pendingRevoke !== null}
        title={pendingRevoke ? `Revoke the token “${pendingRevoke.name}”?` : ""}
        confirmLabel="Revoke token"
        danger
        busy={revoke.isPending}
        error={revoke.isError && pendingRevoke ? errorMessage(revoke.error) : null}
        onConfirm={() => pendingRevoke && revoke.mutate(pendingRevoke)}
        onCancel={() => {
          revoke.reset();
          setPendingRevoke(null);
        }}
        testId="confirm-revoke-token"
      >
        <p>Every script, build agent or CI job using it is refused from the next request. A revoked token cannot be restored; create a new one instead.</p>
      </ConfirmDialog>
    </StudioShell>
  );
}

function CreateTokenForm({ studioId, onCreated }: { studioId: string; onCreated: (created: CreatedToken) => void }) {
  const queryClient = useQueryClient();
  const [name, setName] = useState("");
  const [scopes, setScopes] = useState<Scope[]>(["read"]);
  const create = useMutation({
    mutationFn: (input: { name: string; scopes: Scope[] }) => apiFetch<CreatedToken>(`${studioApiPath(studioId)}/tokens`, { method: "POST", body: input }),
    onSuccess: async (result) => {
      setName("");
      onCreated(result);
      await queryClient.invalidateQueries({ queryKey: queryKeys.tokens(studioId) });
    },
  });
  const apiError = create.error instanceof ApiClientError ? create.error : null;
  const nameError = apiError?.messageFor("name");
  const scopesError = apiError?.messageUnder("scopes");

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    create.mutate({ name: name.trim(), scopes });
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {create.error && !nameError && !scopesError ? <Alert>{errorMessage(create.error)}</Alert> : null}
      <TextField id="token-name" label="Token name" hint="Say where it will live, e.g. “nightly build agent”." value={name} onChange={(event) => setName(event.target.value)} error={nameError} />
      <CheckboxGroup id="token-scopes" legend="Scopes" options={SCOPES} valuesAsCode selected={scopes} onChange={setScopes} error={scopesError} />
      <Button type="submit" disabled={create.isPending}>
        {create.isPending ? "Creating…" : "Create token"}
      </Button>
    </form>
  );
}
