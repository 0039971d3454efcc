"use client";

import { useMutation } from "@tanstack/react-query";
import Link from "next/link";
import { useState, type FormEvent } from "react";
import { Alert, Button, TextField } from "@/components/ui";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";
import { DemoMailboxHint } from "./demo-mailbox-hint";

export function ResetRequestForm({ mailboxEnabled }: { mailboxEnabled: boolean }) {
  const [email, setEmail] = useState("");
  const request = useMutation({
    mutationFn: (address: string) => apiFetch<unknown>("/api/v1/password-reset", { method: "POST", body: { email: address } }),
  });

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    request.mutate(email.trim());
  }

  if (request.isSuccess) {
    return (
      <Alert tone="ok">
        If an account exists for <strong>{request.variables}</strong>, we sent it a link to choose a new password. The link expires in one hour
        and works once.
        <DemoMailboxHint enabled={mailboxEnabled} />
      </Alert>
    );
  }

  const apiError = request.error instanceof ApiClientError ? request.error : null;
  const emailError = apiError?.messageFor("email");
  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {request.error && !emailError ? <Alert>{errorMessage(request.error)}</Alert> : null}
      <TextField id="reset-email" label="E-mail" type="email" autoComplete="email" value={email} onChange={(event) => setEmail(event.target.value)} error={emailError} />
      <Button type="submit" className="w-full" disabled={request.isPending}>
        {request.isPending ? "Sending…" : "E-mail me a reset link"}
      </Button>
      <p className="text-sm text-ink-muted">
        Remembered it?{" "}
        <Link href="/signin" className="text-action underline-offset-2 hover:underline">
          Back to sign in
        </Link>
      </p>
    </form>
  );
}
