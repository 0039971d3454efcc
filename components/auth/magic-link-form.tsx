"use client";

import { signIn } from "next-auth/react";
import { useState, type FormEvent } from "react";
import { Alert, Button, TextField } from "@/components/ui";
import { DemoMailboxHint } from "./demo-mailbox-hint";

type MagicLinkState = { kind: "idle" } | { kind: "sending" } | { kind: "sent"; email: string } | { kind: "error"; message: string };

/** "E-mail me a sign-in link": next-auth's e-mail provider, with the destination kept in callbackUrl. */
export function MagicLinkForm({
  callbackUrl,
  fixedEmail,
  mailboxEnabled,
  idPrefix = "magic",
  buttonLabel = "E-mail me a sign-in link",
}: {
  callbackUrl: string;
  fixedEmail?: string;
  mailboxEnabled: boolean;
  idPrefix?: string;
  buttonLabel?: string;
}) {
  const [email, setEmail] = useState(fixedEmail ?? "");
  const [state, setState] = useState<MagicLinkState>({ kind: "idle" });

  async function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const address = (fixedEmail ?? email).trim();
    if (!address) {
      setState({ kind: "error", message: "Enter your e-mail address." });
      return;
    }
    setState({ kind: "sending" });
    const result = await signIn("email", { email: address, callbackUrl, redirect: false });
    if (!result || result.error) {
      const message =
        result?.error === "TooManyRequests" ? "Too many sign-in links were asked for. Wait a while, then try again." : "We could not send the sign-in e-mail. Check the address and try again.";
      setState({ kind: "error", message });
      return;
    }
    setState({ kind: "sent", email: address });
  }

  if (state.kind === "sent") {
    return (
      <Alert tone="ok">
        We sent a sign-in link to <strong>{state.email}</strong>. It works once and expires soon.
        <DemoMailboxHint enabled={mailboxEnabled} />
      </Alert>
    );
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Sign in with an e-mailed link">
      {fixedEmail ? null : (
        <TextField
          id={`${idPrefix}-email`}
          label="E-mail for a sign-in link"
          type="email"
          autoComplete="email"
          value={email}
          onChange={(event) => setEmail(event.target.value)}
          error={state.kind === "error" ? state.message : undefined}
        />
      )}
      {fixedEmail && state.kind === "error" ? <Alert>{state.message}</Alert> : null}
      <Button type="submit" variant={fixedEmail ? "primary" : "secondary"} className="w-full" disabled={state.kind === "sending"}>
        {state.kind === "sending" ? "Sending…" : buttonLabel}
      </Button>
    </form>
  );
}
