import type { Metadata } from "next";
import { redirect } from "next/navigation";
import { SignInForm } from "@/components/auth/sign-in-form";
import { Alert, AuthPanel } from "@/components/ui";
import { getPageUser } from "@/lib/auth/page-guard";
import { safeCallbackUrl, signInErrorMessage } from "@/lib/ui/callback-url";
import { isMailFakeEnabled } from "@/lib/mail/mode";

export const metadata: Metadata = { title: "Sign in" };

export default async function SignInPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  const callbackUrl = safeCallbackUrl(params.callbackUrl);
  // Already signed in: nothing to do here, go where the visitor was heading.
  if (!params.error && (await getPageUser())) redirect(callbackUrl);
  return (
    <AuthPanel title="Sign in to Kickdrift" intro="Use your password, or have a one-time link sent to your inbox.">
      {params.sent ? (
        <div className="mb-6">
          <Alert tone="ok">Check your inbox: we sent you a sign-in link. It works once.</Alert>
        </div>
      ) : null}
      <SignInForm callbackUrl={callbackUrl} initialError={signInErrorMessage(params.error)} mailboxEnabled={isMailFakeEnabled()} />
    </AuthPanel>
  );
}
