"use client";

import { useMutation } from "@tanstack/react-query";
import Link from "next/link";
import { useRouter } from "next/navigation";
import { signIn } from "next-auth/react";
import { useState, type FormEvent } from "react";
import { Alert, Button, TextField } from "@/components/ui";
import { safeCallbackUrl } from "@/lib/ui/callback-url";
import { ApiClientError, apiFetch, errorMessage } from "@/lib/ui/api";

type SignUpInput = { email: string; password: string; name: string };

export function SignUpForm({ callbackUrl }: { callbackUrl: string }) {
  const router = useRouter();
  const [values, setValues] = useState<SignUpInput>({ name: "", email: "", password: "" });
  const [signInFailed, setSignInFailed] = useState(false);

  const signUp = useMutation({
    mutationFn: (input: SignUpInput) => apiFetch<{ accepted: true; message: string }>("/api/v1/signup", { method: "POST", body: input }),
    onSuccess: async (_data, input) => {
      // The answer is the same for a new and a taken address; signing in with the password just
      // chosen works only for a new account, so the user lands where they were going.
      const result = await signIn("credentials", { email: input.email, password: input.password, callbackUrl, redirect: false });
      if (!result || result.error) {
        setSignInFailed(true);
        return;
      }
      router.push(safeCallbackUrl(callbackUrl));
      router.refresh();
    },
  });

  const apiError = signUp.error instanceof ApiClientError ? signUp.error : null;
  const fieldError = (field: keyof SignUpInput) => apiError?.messageFor(field);
  const generalError =
    signUp.error && !(apiError && (["name", "email", "password"] as const).some((field) => apiError.messageFor(field))) ? errorMessage(signUp.error) : null;

  function onSubmit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    signUp.mutate({ name: values.name.trim(), email: values.email.trim(), password: values.password });
  }

  if (signInFailed) {
    return (
      <Alert tone="ok">
        If this address was new, your account is ready:{" "}
        <Link href={`/signin?callbackUrl=${encodeURIComponent(callbackUrl)}`} className="underline">
          sign in
        </Link>{" "}
        to continue. If it already had an account, we sent its owner an e-mail.
      </Alert>
    );
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-4">
      {generalError ? <Alert>{generalError}</Alert> : null}
      <TextField
        id="signup-name"
        label="Your name"
        autoComplete="name"
        value={values.name}
        onChange={(event) => setValues({ ...values, name: event.target.value })}
        error={fieldError("name")}
      />
      <TextField
        id="signup-email"
        label="Work e-mail"
        type="email"
        autoComplete="email"
        value={values.email}
        onChange={(event) => setValues({ ...values, email: event.target.value })}
        error={fieldError("email")}
      />
      <TextField
        id="signup-password"
        label="Password"
        type="password"
        autoComplete="new-password"
        hint="10 to 200 characters."
        value={values.password}
        onChange={(event) => setValues({ ...values, password: event.target.value })}
        error={fieldError("password")}
      />
      <Button type="submit" className="w-full" disabled={signUp.isPending}>
        {signUp.isPending ? "Creating your account…" : "Create account"}
      </Button>
      <p className="text-sm text-ink-muted">
        Already have an account?{" "}
        <Link href={`/signin?callbackUrl=${encodeURIComponent(callbackUrl)}`} className="text-action underline-offset-2 hover:underline">
          Sign in
        </Link>
      </p>
    </form>
  );
}
