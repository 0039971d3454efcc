"use client";

import { useMutation, useQueryClient } from "@tanstack/react-query";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useState, type FormEvent } from "react";
import { Alert, Button, Card, EmptyState, LoadingRows, PageHeading, RoleBadge, TextField } from "@/components/ui";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { queryKeys, useStudios } from "@/lib/ui/queries";
import type { StudioSummary } from "@/lib/ui/types";

export function StudiosPage({ userName, initialStudios }: { userName: string; initialStudios?: StudioSummary[] }) {
  const studios = useStudios(initialStudios);
  return (
    <div>
      <PageHeading eyebrow="Your studios" title={userName ? `Welcome, ${userName}` : "Your studios"}>
        A studio holds your team, its roles, API tokens and — as sweeps arrive — its scenarios and compute balance.
      </PageHeading>
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,1.6fr)_minmax(0,1fr)]">
        <Card title="Studios you belong to">
          {studios.isPending ? (
            <LoadingRows label="studios" />
          ) : studios.isError ? (
            <Alert>{errorMessage(studios.error)}</Alert>
          ) : studios.data.length === 0 ? (
            <EmptyState>You are not in any studio yet. Create one, or open an invitation link from a colleague.</EmptyState>
          ) : (
            <ul className="divide-y divide-line" data-testid="studio-list">
              {studios.data.map((studio) => (
                <li key={studio.id}>
                  <Link href={`/studios/${studio.id}`} className="flex items-center justify-between gap-4 rounded-md px-2 py-3 hover:bg-surface-muted">
                    <span className="font-semibold">{studio.name}</span>
                    <RoleBadge role={studio.role} />
                  </Link>
                </li>
              ))}
            </ul>
          )}
        </Card>
        <Card title="Create a studio">
          <CreateStudioForm />
        </Card>
      </div>
    </div>
  );
}

function CreateStudioForm() {
  const router = useRouter();
  const queryClient = useQueryClient();
  const [name, setName] = useState("");
  const create = useMutation({
    mutationFn: (studioName: string) => apiFetch<{ studio: StudioSummary }>("/api/v1/studios", { method: "POST", body: { name: studioName } }),
    onSuccess: async ({ studio }) => {
      await queryClient.invalidateQueries({ queryKey: queryKeys.studios });
      router.push(`/studios/${studio.id}`);
    },
  });
  const apiError = create.error instanceof ApiClientError ? create.error : null;
  const nameError = apiError?.messageFor("name");

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    create.mutate(name.trim());
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {create.error && !nameError ? <Alert>{errorMessage(create.error)}</Alert> : null}
      <TextField
        id="studio-name"
        label="Studio name"
        hint="You become its owner. You can invite engineers and finance later."
        value={name}
        onChange={(event) => setName(event.target.value)}
        error={nameError}
      />
      <Button type="submit" disabled={create.isPending}>
        {create.isPending ? "Creating…" : "Create studio"}
      </Button>
    </form>
  );
}
