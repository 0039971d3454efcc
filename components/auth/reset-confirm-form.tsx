"use client";

import { useMutation } from "@tanstack/react-query";
import Link from "next/link";
import { useState, type FormEvent } from "react";
import { Alert, Button, ButtonLink, TextField } from "@/components/ui";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";

export function ResetConfirmForm({ token }: { token: string }) {
  const [password, setPassword] = useState("");
  const [repeat, setRepeat] = useState("");
  const [mismatch, setMismatch] = useState(false);
  const confirm = useMutation({
    mutationFn: (newPassword: string) => apiFetch<unknown>("/api/v1/password-reset/confirm", { method: "POST", body: { token, password: newPassword } }),
  });

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    if (password !== repeat) {
      setMismatch(true);
      return;
    }
    setMismatch(false);
    confirm.mutate(password);
  }

  if (confirm.isSuccess) {
    return (
      <div className="space-y-4">
        <Alert tone="ok">Your password has been changed. Sign in with the new one.</Alert>
        <ButtonLink href="/signin">Sign in</ButtonLink>
      </div>
    );
  }

  const apiError = confirm.error instanceof ApiClientError ? confirm.error : null;
  const passwordError = apiError?.messageFor("password");
  const tokenProblem = confirm.error && !passwordError;
  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {tokenProblem ? (
        <Alert>
          {errorMessage(confirm.error)}{" "}
          <Link href="/reset" className="underline">
            Ask for a new link
          </Link>
          .
        </Alert>
      ) : null}
      <TextField
        id="reset-password"
        label="New password"
        type="password"
        autoComplete="new-password"
        hint="10 to 200 characters."
        value={password}
        onChange={(event) => setPassword(event.target.value)}
        error={passwordError}
      />
      <TextField
        id="reset-password-repeat"
        label="Repeat the new password"
        type="password"
        autoComplete="new-password"
        value={repeat}
        onChange={(event) => setRepeat(event.target.value)}
        error={mismatch ? "The two passwords differ." : undefined}
      />
      <Button type="submit" className="w-full" disabled={confirm.isPending}>
        {confirm.isPending ? "Saving…" : "Set new password"}
      </Button>
    </form>
  );
}
