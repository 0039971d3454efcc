"use client";

import Link from "next/link";
import { useRouter } from "next/navigation";
import { signIn } from "next-auth/react";
import { useState, type FormEvent } from "react";
import { MagicLinkForm } from "@/components/auth/magic-link-form";
import { Alert, Button, TextField } from "@/components/ui";
import { safeCallbackUrl } from "@/lib/ui/callback-url";

// One message for every credentials failure, so the form never tells which of the two was wrong
// (or that an account is locked for too many attempts).
const GENERIC_SIGN_IN_ERROR = "Invalid e-mail or password.";

export function SignInForm({ callbackUrl, initialError, mailboxEnabled }: { callbackUrl: string; initialError?: string; mailboxEnabled: boolean }) {
  const router = useRouter();
  const [email, setEmail] = useState("");
  const [password, setPassword] = useState("");
  const [error, setError] = useState<string | undefined>(initialError);
  const [pending, setPending] = useState(false);

  async function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    setPending(true);
    setError(undefined);
    const result = await signIn("credentials", { email: email.trim(), password, callbackUrl, redirect: false });
    if (!result || result.error || !result.ok) {
      setPending(false);
      setError(GENERIC_SIGN_IN_ERROR);
      return;
    }
    router.push(safeCallbackUrl(callbackUrl));
    router.refresh();
  }

  return (
    <div className="space-y-6">
      <form onSubmit={onSubmit} noValidate className="space-y-4" aria-label="Sign in with password">
        {error ? <Alert>{error}</Alert> : null}
        <TextField id="signin-email" label="E-mail" type="email" autoComplete="email" value={email} onChange={(event) => setEmail(event.target.value)} />
        <TextField
          id="signin-password"
          label="Password"
          type="password"
          autoComplete="current-password"
          value={password}
          onChange={(event) => setPassword(event.target.value)}
        />
        <div className="flex items-center justify-between gap-4">
          <Button type="submit" disabled={pending}>
            {pending ? "Signing in…" : "Sign in"}
          </Button>
          <Link href="/reset" className="text-sm text-action underline-offset-2 hover:underline">
            Forgot your password?
          </Link>
        </div>
      </form>
      <div className="flex items-center gap-3 text-xs uppercase tracking-wider text-ink-muted" aria-hidden="true">
        <span className="h-px flex-1 bg-line" />
        or
        <span className="h-px flex-1 bg-line" />
      </div>
      <MagicLinkForm callbackUrl={callbackUrl} mailboxEnabled={mailboxEnabled} />
      <p className="text-sm text-ink-muted">
        New to Kickdrift?{" "}
        <Link href={`/signup?callbackUrl=${encodeURIComponent(callbackUrl)}`} className="text-action underline-offset-2 hover:underline">
          Create an account
        </Link>
      </p>
    </div>
  );
}
