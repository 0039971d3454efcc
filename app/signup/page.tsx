import type { Metadata } from "next";
import { redirect } from "next/navigation";
import { SignUpForm } from "@/components/auth/sign-up-form";
import { AuthPanel } from "@/components/ui";
import { getPageUser } from "@/lib/auth/page-guard";
import { safeCallbackUrl } from "@/lib/ui/callback-url";

export const metadata: Metadata = { title: "Create an account" };

export default async function SignUpPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  const callbackUrl = safeCallbackUrl(params.callbackUrl);
  // Signed in already: an account exists, carry on to where the visitor was heading.
  if (await getPageUser()) redirect(callbackUrl);
  return (
    <AuthPanel title="Create your Kickdrift account" intro="Then create a studio and invite the people who tune your game's physics.">
      <SignUpForm callbackUrl={callbackUrl} />
    </AuthPanel>
  );
}
